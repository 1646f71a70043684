import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import OpenSeadragon from 'openseadragon';
import { evaluateRegistration, snapToNearest, proposePartner, applyAffine, invertAffine } from '../../lib/analysis/geometry';
import type { Affine, Point } from '../../lib/analysis/types';
import type { FieldDetection } from '../../lib/schemas/detectionTypes';
import type { SavedRegistration } from '../../lib/schemas/registration';
import AlignmentCheck, { type CheckLayer } from './registration/AlignmentCheck';
import { getFieldDetection, proposePairs, saveRegistration } from '../../lib/api-client/routes';
import { errorText } from '../../lib/api-client/http';

interface Pair { afm: Point; fl: Point }
/** A partner proposed through the current transform for a point the analyst clicked; not a pair until accepted. */
interface Suggestion extends Pair { from: 'afm' | 'fl'; offsetPx: number }
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

const SNAP_PX = 6;
const fmt = (v: number | null | undefined, d = 1) => (v == null || !Number.isFinite(v) ? '–' : v.toFixed(d));

/** Adds a click handler that reports image pixel coordinates ((0,0) = centre of the top-left pixel). */
function onImageClick(v: OpenSeadragon.Viewer, cb: (p: Point) => void) {
  v.addHandler('canvas-click', (e) => {
    const ev = e as unknown as { quick: boolean; position: OpenSeadragon.Point; preventDefaultAction: boolean };
    if (!ev.quick) return;
    ev.preventDefaultAction = true;
    const item = v.world.getItemAt(0);
    if (!item) return;
    const p = item.viewerElementToImageCoordinates(ev.position);
    cb({ x: p.x - 0.5, y: p.y - 0.5 });
  });
}

function makeViewer(el: HTMLElement, sources: string[]) {
  return OpenSeadragon({
    element: el,
    tileSources: sources.map((s, i) => ({ tileSource: s, compositeOperation: i > 0 ? 'lighter' : undefined })) as never,
    showNavigationControl: false,
    gestureSettingsMouse: { clickToZoom: false, dblClickToZoom: true },
    maxZoomPixelRatio: 12,
    imageSmoothingEnabled: false,
  });
}

/** Draws markers (pairs, mapped outlines) as overlays placed in image pixel coordinates. */
function drawMarkers(v: OpenSeadragon.Viewer | null, marks: { p: Point; r: number; cls: string; label?: string }[]) {
  const item = v?.world.getItemAt(0);
  if (!v || !item) return;
  v.clearOverlays();
  for (const m of marks) {
    const el = document.createElement('div');
    el.className = m.cls;
    if (m.label) el.textContent = m.label;
    const tl = item.imageToViewportCoordinates(m.p.x + 0.5 - m.r, m.p.y + 0.5 - m.r);
    const br = item.imageToViewportCoordinates(m.p.x + 0.5 + m.r, m.p.y + 0.5 + m.r);
    v.addOverlay({ element: el, location: new OpenSeadragon.Rect(tl.x, tl.y, br.x - tl.x, br.y - tl.y) });
  }
}

/** The analyst's registration screen: fiducial pairs on the height map and the fluorescence frame. */
export default function RegistrationWorkspace({ fieldId, afmPixelNm, flPixelNm, channelLayers, latest, canSave, checkLayers }: Props) {
  const leftEl = useRef<HTMLDivElement>(null);
  const rightEl = useRef<HTMLDivElement>(null);
  const left = useRef<OpenSeadragon.Viewer | null>(null);
  const right = useRef<OpenSeadragon.Viewer | null>(null);
  const [ready, setReady] = useState(0);
  const [det, setDet] = useState<FieldDetection | null>(null);
  const [pairs, setPairs] = useState<Pair[]>(latest?.pairs ?? []);
  const [history, setHistory] = useState<Pair[][]>([]);
  const [pending, setPending] = useState<{ side: 'afm' | 'fl'; p: Point } | null>(null);
  const [suggestion, setSuggestion] = useState<Suggestion | null>(null);
  const [selected, setSelected] = useState<number | null>(null);
  const [model, setModel] = useState<'affine' | 'similarity'>(latest?.model ?? 'affine');
  const [baseVersion, setBaseVersion] = useState(latest?.version ?? 0);
  const [proposals, setProposals] = useState<(Pair & { residualPx: number })[]>([]);
  const [overlay, setOverlay] = useState(0.8);
  const [showMapped, setShowMapped] = useState(true);
  const [msg, setMsg] = useState<{ ok: boolean; text: string } | null>(latest ? { ok: true, text: `Showing saved version ${latest.version} by ${latest.createdByName ?? 'unknown'}.` } : null);
  const [busy, setBusy] = useState(false);

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

  const commit = useCallback((next: Pair[]) => {
    setHistory((h) => [...h.slice(-99), pairs]);
    setPairs(next);
  }, [pairs]);

  const snap = (side: 'afm' | 'fl', p: Point) => snapToNearest(p, side === 'afm' ? afmCandidates : flCandidates, SNAP_PX)?.point ?? p;

  const click = useCallback((side: 'afm' | 'fl', raw: Point) => {
    const p = snap(side, raw);
    if (selected !== null) {
      commit(pairs.map((q, i) => (i === selected ? { ...q, [side]: p } : q)));
      return;
    }
    // a click in the other image places the partner by hand instead of the proposed one
    const start = suggestion ? { side: suggestion.from, p: suggestion[suggestion.from] } : pending;
    if (start && start.side !== side) {
      commit([...pairs, side === 'afm' ? { afm: p, fl: start.p } : { afm: start.p, fl: p }]);
      setPending(null);
      setSuggestion(null);
      return;
    }
    setSuggestion(null);
    // after 3 pairs a click on one image proposes its partner on the other (snapped to a detected feature);
    // the analyst accepts it (Enter), clicks the partner by hand, or cancels (Esc)
    if (transform && side === 'afm') {
      const prop = proposePartner(p, transform, flCandidates, { maxDistancePx: 3 });
      if (prop.candidate) {
        setPending(null);
        return setSuggestion({ from: 'afm', afm: p, fl: prop.candidate.point, offsetPx: prop.candidate.distancePx });
      }
    }
    if (transform && side === 'fl') {
      const back = applyAffine(invertAffine(transform), p);
      const hit = snapToNearest(back, afmCandidates, SNAP_PX);
      if (hit) {
        setPending(null);
        return setSuggestion({ from: 'fl', afm: hit.point, fl: p, offsetPx: hit.distancePx });
      }
    }
    setPending({ side, p });
  }, [pairs, pending, suggestion, selected, transform, afmCandidates, flCandidates, commit]);

  const acceptSuggestion = useCallback(() => {
    if (!suggestion) return;
    commit([...pairs, { afm: suggestion.afm, fl: suggestion.fl }]);
    setSuggestion(null);
  }, [suggestion, pairs, commit]);
  const clickRef = useRef(click);
  clickRef.current = click;

  useEffect(() => {
    if (!leftEl.current || !rightEl.current) return;
    const l = makeViewer(leftEl.current, [`/api/fields/${fieldId}/tiles/height.dzi`]);
    const r = makeViewer(rightEl.current, channelLayers.map((c) => `/api/fields/${fieldId}/tiles/${c}.dzi`));
    onImageClick(l, (p) => clickRef.current('afm', p));
    onImageClick(r, (p) => clickRef.current('fl', p));
    l.addHandler('open', () => setReady((n) => n + 1));
    r.addHandler('open', () => setReady((n) => n + 1));
    left.current = l;
    right.current = r;
    return () => { l.destroy(); r.destroy(); };
  }, [fieldId]);

  // markers: pairs on both sides, pending point, and the overlay through the transform
  useEffect(() => {
    const afmMarks: Parameters<typeof drawMarkers>[1] = [];
    const flMarks: Parameters<typeof drawMarkers>[1] = [];
    if (showMapped && transform && det) {
      const inv = invertAffine(transform);
      for (const v of det.vesicles) {
        const q = applyAffine(transform, v);
        flMarks.push({ p: q, r: Math.max(0.6, (v.diameterNm / 2) / flPixelNm), cls: 'hl-outline' });
      }
      for (const q of flCandidates) afmMarks.push({ p: applyAffine(inv, q), r: Math.max(2, 60 / afmPixelNm), cls: 'hl-spot' });
    }
    pairs.forEach((q, i) => {
      const cls = `hl-pair${selected === i ? ' hl-selected' : ''}`;
      afmMarks.push({ p: q.afm, r: 6, cls, label: String(i + 1) });
      flMarks.push({ p: q.fl, r: 1.5, cls, label: String(i + 1) });
    });
    for (const q of proposals) {
      afmMarks.push({ p: q.afm, r: 6, cls: 'hl-proposal' });
      flMarks.push({ p: q.fl, r: 1.5, cls: 'hl-proposal' });
    }
    if (pending) (pending.side === 'afm' ? afmMarks : flMarks).push({ p: pending.p, r: pending.side === 'afm' ? 6 : 1.5, cls: 'hl-pending' });
    if (suggestion) {
      // the clicked point as pending, its proposed partner with its own marker
      const clicked = suggestion.from === 'afm' ? afmMarks : flMarks;
      const other = suggestion.from === 'afm' ? flMarks : afmMarks;
      clicked.push({ p: suggestion[suggestion.from], r: suggestion.from === 'afm' ? 6 : 1.5, cls: 'hl-pending' });
      const to = suggestion.from === 'afm' ? 'fl' : 'afm';
      other.push({ p: suggestion[to], r: to === 'afm' ? 10 : 3, cls: 'hl-suggested', label: '?' }); // larger than a pair's ring, so it stands out
    }
    drawMarkers(left.current, afmMarks);
    drawMarkers(right.current, flMarks);
  }, [pairs, pending, suggestion, selected, proposals, transform, det, showMapped, ready, flCandidates]);

  const undo = useCallback(() => {
    setSuggestion(null); // it was proposed through the transform being undone
    setHistory((h) => {
      if (!h.length) return h;
      setPairs(h[h.length - 1]);
      return h.slice(0, -1);
    });
  }, []);
  const remove = (i: number) => { commit(pairs.filter((_, j) => j !== i)); setSelected(null); };

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
    setProposals(body.pairs);
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
    setBaseVersion(body.version);
    setMsg({ ok: true, text: `Saved as version ${body.version}: FRE ${fmt(body.freNm)} nm.` });
  }

  useEffect(() => {
    const key = (e: KeyboardEvent) => {
      if ((e.target as HTMLElement)?.closest('input, select, textarea')) return;
      if ((e.key === 'z' && (e.ctrlKey || e.metaKey)) || e.key === 'u') { e.preventDefault(); undo(); }
      else if ((e.key === 'Delete' || e.key === 'Backspace') && selected !== null) { e.preventDefault(); remove(selected); }
      else if (e.key === 'Escape') { setPending(null); setSuggestion(null); setSelected(null); }
      else if (e.key === 'Enter' && suggestion && !(e.target as HTMLElement)?.closest('button, a')) { e.preventDefault(); acceptSuggestion(); }
      else if (e.key === 's' && (e.ctrlKey || e.metaKey)) { e.preventDefault(); void save(); }
      else if (e.key === 'f') void findPairs();
    };
    window.addEventListener('keydown', key);
    return () => window.removeEventListener('keydown', key);
  });

  const res = evaluation.result;
  return (
    <div className="space-y-4">
      <style>{`
        .hl-pair{border:2px solid #ff8a66;border-radius:50%;color:#fff;font:600 11px/1 sans-serif;display:flex;align-items:flex-start;justify-content:flex-end;pointer-events:none}
        .hl-selected{border-color:#fff;box-shadow:0 0 0 2px #5b4fc4}
        .hl-pending{border:2px dashed #fff;border-radius:50%;pointer-events:none}
        .hl-suggested{border:2px dashed #ffd166;border-radius:50%;color:#ffd166;font:700 11px/1 sans-serif;display:flex;align-items:flex-start;justify-content:flex-end;pointer-events:none}
        .hl-proposal{border:2px dotted #7ee2b0;border-radius:50%;pointer-events:none}
        .hl-outline{border:1px solid rgba(255,255,255,${overlay});border-radius:50%;pointer-events:none}
        .hl-spot{background:rgba(255,138,102,${overlay * 0.6});border-radius:50%;pointer-events:none}
      `}</style>
      <div className="flex flex-wrap gap-2 items-center text-sm">
        <label className="inline-flex items-center gap-2">Model
          <select className="input w-auto" value={model} onChange={(e) => setModel(e.target.value as 'affine' | 'similarity')}>
            <option value="affine">affine (6 parameters)</option>
            <option value="similarity">similarity (rotation, scale, shift)</option>
          </select>
        </label>
        <button type="button" className="btn btn-quiet" onClick={findPairs} disabled={busy || !canSave} title="f">Find pairs</button>
        <button type="button" className="btn btn-quiet" onClick={undo} disabled={!history.length} title="u or Ctrl+Z">Undo</button>
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
          <button type="button" className="btn" onClick={acceptSuggestion} title="Enter">Accept partner</button>
          <button type="button" className="btn btn-quiet" onClick={() => setSuggestion(null)} title="Esc">Cancel</button>
        </div>
      )}
      {pending && <p className="text-sm text-tip-700">Point placed on the {pending.side === 'afm' ? 'height map' : 'fluorescence frame'}; click its partner on the other image (Esc cancels).</p>}
      <div className="grid gap-4 lg:grid-cols-[1fr_360px]">
        <table className="data-table card w-full text-sm" data-testid="pairs-table">
          <thead><tr><th>#</th><th>AFM x, y (px)</th><th>Fluor. x, y (px)</th><th>Residual (nm)</th><th>Held-out error (nm)</th><th></th></tr></thead>
          <tbody>
            {pairs.map((q, i) => (
              <tr key={i} data-testid="pair-row" className={selected === i ? 'bg-tip-50' : ''} onClick={() => { setSuggestion(null); setSelected(selected === i ? null : i); }}>
                <td>{i + 1}</td>
                <td>{fmt(q.afm.x, 2)}, {fmt(q.afm.y, 2)}</td>
                <td>{fmt(q.fl.x, 2)}, {fmt(q.fl.y, 2)}</td>
                <td>{fmt(res?.residualsNm[i])}</td>
                <td>{fmt(res?.leaveOneOutTreNm?.[i] ?? null)}</td>
                <td><button type="button" className="text-glow-600 underline" onClick={(e) => { e.stopPropagation(); remove(i); }}>delete</button></td>
              </tr>
            ))}
            {proposals.map((q, i) => (
              <tr key={`p${i}`} className="text-cap-600">
                <td>?</td><td>{fmt(q.afm.x, 2)}, {fmt(q.afm.y, 2)}</td><td>{fmt(q.fl.x, 2)}, {fmt(q.fl.y, 2)}</td><td>{fmt(q.residualPx * flPixelNm)}</td><td>proposed</td>
                <td className="space-x-2">
                  <button type="button" className="underline" onClick={() => { commit([...pairs, { afm: q.afm, fl: q.fl }]); setProposals(proposals.filter((_, j) => j !== i)); }}>accept</button>
                  <button type="button" className="underline" onClick={() => setProposals(proposals.filter((_, j) => j !== i))}>drop</button>
                </td>
              </tr>
            ))}
          </tbody>
        </table>
        <div className="card text-sm space-y-2" data-testid="registration-summary">
          {proposals.length > 0 && <button type="button" className="btn w-full justify-center" onClick={() => { commit([...pairs, ...proposals.map(({ afm, fl }) => ({ afm, fl }))]); setProposals([]); }}>Accept all {proposals.length} proposals</button>}
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
