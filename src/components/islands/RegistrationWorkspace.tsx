import { useEffect, useMemo, useReducer, useRef, useState } from 'react';
import type OpenSeadragon from 'openseadragon';
import { evaluateRegistration } from '../../lib/analysis/geometry';
import type { Affine, Point } from '../../lib/analysis/types';
import type { FieldDetection } from '../../lib/schemas/detectionTypes';
import type { SavedRegistration } from '../../lib/schemas/registration';
import AlignmentCheck, { type CheckLayer } from './registration/AlignmentCheck';
import { initialPairEdit, pairEditReducer, type PickContext } from './registration/pairEditing';
import { pairMarkers } from './registration/pairMarkers';
import { useRegistrationKeys } from './registration/registrationKeys';
import { useOpenSeadragonViewer } from './viewer/useOpenSeadragonViewers';
import { useImageClick } from './viewer/useImagePointer';
import { useImageMarkers } from './viewer/useImageMarkers';
import { useCssVariables } from './useCssVariables';
import { getFieldDetection, proposePairs, saveRegistration } from '../../lib/api-client/routes';
import { errorText } from '../../lib/api-client/http';

interface Props {
  fieldId: string;
  afmPixelNm: number;
  flPixelNm: number;
  channelLayers: string[];
  latest: SavedRegistration | null;
  canSave: boolean;
  /** Stored value read-outs for the visual alignment check (height map and channels). */
  checkLayers?: { height: CheckLayer | null; channels: CheckLayer[] };
}

const fmt = (v: number | null | undefined, d = 1) => (v == null || !Number.isFinite(v) ? '–' : v.toFixed(d));

/** A picking viewer: clicks place points (double-click still zooms); channels add up on screen. */
function pickerOptions(sources: string[]): Omit<OpenSeadragon.Options, 'element'> {
  return {
    tileSources: sources.map((s, i) => ({ tileSource: s, compositeOperation: i > 0 ? 'lighter' : undefined })) as never,
    showNavigationControl: false,
    gestureSettingsMouse: { clickToZoom: false, dblClickToZoom: true },
    maxZoomPixelRatio: 12,
    imageSmoothingEnabled: false,
  };
}

/** The analyst's registration screen: fiducial pairs on the height map and the fluorescence frame. */
export default function RegistrationWorkspace({ fieldId, afmPixelNm, flPixelNm, channelLayers, latest, canSave, checkLayers }: Props) {
  const root = useRef<HTMLDivElement>(null);
  const leftEl = useRef<HTMLDivElement>(null);
  const rightEl = useRef<HTMLDivElement>(null);
  const afmViewer = useOpenSeadragonViewer(leftEl, pickerOptions([`/api/fields/${fieldId}/tiles/height.dzi`]), fieldId);
  const flViewer = useOpenSeadragonViewer(rightEl, pickerOptions(channelLayers.map((c) => `/api/fields/${fieldId}/tiles/${c}.dzi`)), fieldId);
  const [edit, dispatch] = useReducer(pairEditReducer, latest, initialPairEdit);
  const { pairs, suggestion, pending, selected, proposals, history, baseVersion } = edit;
  const [det, setDet] = useState<FieldDetection | null>(null);
  const [model, setModel] = useState<'affine' | 'similarity'>(latest?.model ?? 'affine');
  const [overlay, setOverlay] = useState(0.8);
  const [showMapped, setShowMapped] = useState(true);
  const [msg, setMsg] = useState<{ ok: boolean; text: string } | null>(latest ? { ok: true, text: `Showing saved version ${latest.version} by ${latest.createdByName ?? 'unknown'}.` } : null);
  const [busy, setBusy] = useState(false);
  // the overlay markers' opacity (global.css, .hl-outline and .hl-spot) follows the slider
  useCssVariables(root, { '--hl-overlay-opacity': overlay });

  useEffect(() => {
    const stop = new AbortController();
    getFieldDetection(fieldId, stop.signal).then(setDet, () => { if (!stop.signal.aborted) setMsg({ ok: false, text: 'Detections could not be loaded; clicks will not snap.' }); });
    return () => stop.abort();
  }, [fieldId]);

  const afmCandidates = useMemo(() => (det ? [...det.fiducialCandidates, ...det.vesicles].map(({ x, y }) => ({ x, y })) : []), [det]);
  const flCandidates = useMemo(() => {
    const out: Point[] = [];
    for (const ch of det?.spots ?? []) for (const s of ch.spots) if (!out.some((q) => (q.x - s.x) ** 2 + (q.y - s.y) ** 2 < 2.25)) out.push({ x: s.x, y: s.y });
    return out;
  }, [det]);

  const evaluation = useMemo(() => {
    if (pairs.length < 3) return { error: `Place ${3 - pairs.length} more pair${pairs.length === 2 ? '' : 's'} to solve the transform.` };
    try {
      return { result: evaluateRegistration(pairs, { afmPixelNm, flPixelNm, model }) };
    } catch (e) {
      return { error: (e as Error).message };
    }
  }, [pairs, model, afmPixelNm, flPixelNm]);
  const transform: Affine | null = evaluation.result ? evaluation.result.flFromAfm : null;

  const context: PickContext = { transform, afmCandidates, flCandidates };
  useImageClick(afmViewer, (point) => dispatch({ type: 'pick', side: 'afm', point, context }));
  useImageClick(flViewer, (point) => dispatch({ type: 'pick', side: 'fl', point, context }));

  const markers = useMemo(
    () => pairMarkers(edit, { transform, vesicles: det?.vesicles ?? null, flCandidates, showMapped, afmPixelNm, flPixelNm }),
    [edit, transform, det, flCandidates, showMapped, afmPixelNm, flPixelNm],
  );
  useImageMarkers(afmViewer, markers.afm);
  useImageMarkers(flViewer, markers.fl);

  async function findPairs() {
    setBusy(true);
    setMsg(null);
    let body;
    try {
      body = await proposePairs(fieldId, model);
    } catch (e) {
      return setMsg({ ok: false, text: errorText(e) });
    } finally {
      setBusy(false);
    }
    dispatch({ type: 'proposalsFound', pairs: body.pairs });
    setMsg({ ok: true, text: `${body.pairs.length} pairs proposed with the ${body.model} model (RMS ${fmt(body.rmsResidualPx * flPixelNm)} nm). Review them: accept or drop each.` });
  }

  async function save() {
    if (!canSave) return;
    setBusy(true);
    let body;
    try {
      body = await saveRegistration(fieldId, { basedOnVersion: baseVersion, model, pairs });
    } catch (e) {
      return setMsg({ ok: false, text: errorText(e) });
    } finally {
      setBusy(false);
    }
    dispatch({ type: 'saved', version: body.version });
    setMsg({ ok: true, text: `Saved as version ${body.version}: FRE ${fmt(body.freNm)} nm.` });
  }

  useRegistrationKeys({ hasSelection: selected !== null, hasSuggestion: suggestion !== null }, (command) => {
    if (command === 'undo') dispatch({ type: 'undo' });
    else if (command === 'deleteSelected' && selected !== null) dispatch({ type: 'delete', index: selected });
    else if (command === 'cancel') dispatch({ type: 'cancel' });
    else if (command === 'acceptSuggestion') dispatch({ type: 'acceptSuggestion' });
    else if (command === 'save') void save();
    else if (command === 'findPairs') void findPairs();
  });

  const res = evaluation.result;
  return (
    <div ref={root} className="space-y-4">
      <div className="flex flex-wrap gap-2 items-center text-sm">
        <label className="inline-flex items-center gap-2">Model
          <select className="input w-auto" value={model} onChange={(e) => setModel(e.target.value as 'affine' | 'similarity')}>
            <option value="affine">affine (6 parameters)</option>
            <option value="similarity">similarity (rotation, scale, shift)</option>
          </select>
        </label>
        <button type="button" className="btn btn-quiet" onClick={findPairs} disabled={busy || !canSave} title="f">Find pairs</button>
        <button type="button" className="btn btn-quiet" onClick={() => dispatch({ type: 'undo' })} disabled={!history.length} title="u or Ctrl+Z">Undo</button>
        <label className="inline-flex items-center gap-2"><input type="checkbox" checked={showMapped} onChange={(e) => setShowMapped(e.target.checked)} /> overlay through the transform</label>
        <label className="inline-flex items-center gap-2">opacity <input type="range" min={0.1} max={1} step={0.05} value={overlay} onChange={(e) => setOverlay(Number(e.target.value))} /></label>
        {canSave && <button type="button" className="btn ml-auto" onClick={save} disabled={busy || !res} title="Ctrl+S">Save version {baseVersion + 1}</button>}
      </div>
      {msg && <p className={`notice ${msg.ok ? 'notice-ok' : 'notice-error'}`} role={msg.ok ? 'status' : 'alert'} data-testid="registration-message">{msg.text}</p>}
      <div className="grid gap-3 md:grid-cols-2">
        <div>
          <div className="text-xs font-semibold text-mica-600 mb-1">AFM height map · click a bead or vesicle</div>
          <div ref={leftEl} className="h-[460px] bg-black rounded-lg" data-testid="afm-pick" />
        </div>
        <div>
          <div className="text-xs font-semibold text-mica-600 mb-1">Fluorescence · click its partner spot</div>
          <div ref={rightEl} className="h-[460px] bg-black rounded-lg" data-testid="fl-pick" />
        </div>
      </div>
      {suggestion && (
        <div className="notice notice-ok flex flex-wrap items-center gap-3 text-sm" data-testid="partner-proposal">
          <span>
            Proposed partner on the {suggestion.from === 'afm' ? 'fluorescence frame' : 'height map'} at{' '}
            {fmt(suggestion[suggestion.from === 'afm' ? 'fl' : 'afm'].x, 2)}, {fmt(suggestion[suggestion.from === 'afm' ? 'fl' : 'afm'].y, 2)} px
            ({fmt(suggestion.offsetPx * (suggestion.from === 'afm' ? flPixelNm : afmPixelNm))} nm from where the transform puts it).
            Accept it, click the partner on the other image by hand, or cancel.
          </span>
          <button type="button" className="btn" onClick={() => dispatch({ type: 'acceptSuggestion' })} title="Enter">Accept partner</button>
          <button type="button" className="btn btn-quiet" onClick={() => dispatch({ type: 'dismissSuggestion' })} title="Esc">Cancel</button>
        </div>
      )}
      {pending && <p className="text-sm text-tip-700">Point placed on the {pending.side === 'afm' ? 'height map' : 'fluorescence frame'}; click its partner on the other image (Esc cancels).</p>}
      <div className="grid gap-4 lg:grid-cols-[1fr_360px]">
        <table className="data-table card w-full text-sm" data-testid="pairs-table">
          <thead><tr><th>#</th><th>AFM x, y (px)</th><th>Fluor. x, y (px)</th><th>Residual (nm)</th><th>Held-out error (nm)</th><th></th></tr></thead>
          <tbody>
            {pairs.map((q, i) => (
              <tr key={i} data-testid="pair-row" className={selected === i ? 'bg-tip-50' : ''} onClick={() => dispatch({ type: 'toggleSelect', index: i })}>
                <td>{i + 1}</td>
                <td>{fmt(q.afm.x, 2)}, {fmt(q.afm.y, 2)}</td>
                <td>{fmt(q.fl.x, 2)}, {fmt(q.fl.y, 2)}</td>
                <td>{fmt(res?.residualsNm[i])}</td>
                <td>{fmt(res?.leaveOneOutTreNm?.[i] ?? null)}</td>
                <td><button type="button" className="text-glow-600 underline" onClick={(e) => { e.stopPropagation(); dispatch({ type: 'delete', index: i }); }}>delete</button></td>
              </tr>
            ))}
            {proposals.map((q, i) => (
              <tr key={`p${i}`} className="text-cap-600">
                <td>?</td><td>{fmt(q.afm.x, 2)}, {fmt(q.afm.y, 2)}</td><td>{fmt(q.fl.x, 2)}, {fmt(q.fl.y, 2)}</td><td>{fmt(q.residualPx * flPixelNm)}</td><td>proposed</td>
                <td className="space-x-2">
                  <button type="button" className="underline" onClick={() => dispatch({ type: 'acceptProposal', index: i })}>accept</button>
                  <button type="button" className="underline" onClick={() => dispatch({ type: 'dropProposal', index: i })}>drop</button>
                </td>
              </tr>
            ))}
          </tbody>
        </table>
        <div className="card text-sm space-y-2" data-testid="registration-summary">
          {proposals.length > 0 && <button type="button" className="btn w-full justify-center" onClick={() => dispatch({ type: 'acceptAllProposals' })}>Accept all {proposals.length} proposals</button>}
          {!res ? <p className="text-mica-600">{evaluation.error}</p> : (
            <>
              <div className="flex justify-between"><span>Fiducial registration error</span><strong data-testid="fre">{fmt(res.freNm)} nm</strong></div>
              <div className="flex justify-between" title="Each pair left out in turn, the transform fitted to the others and the distance measured at the left-out pair (RMS): an estimate of the error away from the fiducials (TRE). FRE, on the pairs fitted, does not estimate it."><span>Held-out fiducial error (RMS)</span><strong>{fmt(res.leaveOneOutTreRmsNm)} nm</strong></div>
              <div className="flex justify-between"><span>Predicted error at the centre</span><strong>{fmt(res.predictedTreAtCentroidNm)} nm</strong></div>
              <div className="flex justify-between"><span>Pairs</span><strong>{res.nbFiducials}</strong></div>
              <p className="text-mica-600" data-testid="transform-words">{res.description}</p>
              <p className="text-xs text-mica-400 font-mono" data-testid="transform-matrix" title="AFM px → fluorescence px: [a, b, c, d, e, f], x′ = a·x + b·y + c, y′ = d·x + e·y + f">[{res.flFromAfm.map((v) => v.toFixed(5)).join(', ')}]</p>
              {res.warnings.map((w) => <p key={w.code} className="notice notice-caution text-xs">{w.message}</p>)}
            </>
          )}
          <p className="text-xs text-mica-400">Keys: u undo · Delete removes the selected pair · Enter accepts the proposed partner · Esc cancels · f find pairs · Ctrl+S save. From 3 pairs on, a click on one image proposes its partner on the other (dashed yellow “?”): accept it or click the partner by hand. Select a row, then click an image to move that side of the pair.</p>
        </div>
      </div>
      <AlignmentCheck fieldId={fieldId} transform={transform} afmPixelNm={afmPixelNm} height={checkLayers?.height ?? null} channels={checkLayers?.channels ?? []} />
    </div>
  );
}
