import { useState } from 'react';
import { DetectionSettings, type DetectionSettings as Settings } from '../../lib/schemas/detectionSettings';
import { saveDetectionSettings } from '../../lib/api-client/routes';
import { errorText } from '../../lib/api-client/http';

/** What the last detection used, as stored beside its results (see FieldDetection). */
export interface SettingsUsed extends Settings { minAreaPx: number; source: 'defaults' | 'analyst' }

interface Props {
  fieldId: string;
  version: number;
  status: string;
  /** A job (ingestion or linking) is running on the field. */
  busy: boolean;
  canAnalyse: boolean;
  afmPixelNm: number;
  /** Settings of the last detection, or null for a detection made before settings were recorded. */
  used: SettingsUsed | null;
  /** Threshold the last detection applied (nm), and what it found. */
  lastThresholdNm: number | null;
  counts: { vesicles: number; fiducials: number } | null;
  /** Settings to start the form from when `used` is missing (the analysis defaults for this pixel size). */
  defaults: Settings;
}

const METHOD_WORDS = { robust: 'background + k × σ', otsu: 'Otsu (histogram split)', manual: 'fixed height' } as const;
const n = (v: number, digits = 1) => v.toLocaleString('en', { maximumFractionDigits: digits });

/**
 * The field's vesicle-detection settings: read-only for everyone, editable with "Detect again" for analysts.
 * Saving queues ingestion again; the status card above shows its progress (the page reloads to pick it up).
 */
export default function DetectionSettingsForm(p: Props) {
  const start = p.used ?? p.defaults;
  const [method, setMethod] = useState<Settings['threshold']['method']>(start.threshold.method);
  const [k, setK] = useState(String(start.threshold.method === 'robust' ? start.threshold.k : 3));
  const [thresholdNm, setThresholdNm] = useState(String(start.threshold.method === 'manual' ? start.threshold.thresholdNm : p.lastThresholdNm != null ? Number(p.lastThresholdNm.toFixed(2)) : 5));
  const [minHeightNm, setMinHeightNm] = useState(String(start.minHeightNm));
  const [minAreaNm2, setMinAreaNm2] = useState(String(Number(start.minAreaNm2.toFixed(1))));
  const [beadMinHeightNm, setBeadMinHeightNm] = useState(String(start.beadMinHeightNm));
  const [levellingOrder, setLevellingOrder] = useState<1 | 2>(start.levellingOrder);
  const [msg, setMsg] = useState<{ ok: boolean; text: string } | null>(null);
  const [sending, setSending] = useState(false);

  const blocked = p.status === 'approved' ? 'This field is approved; send it back before detecting again.'
    : p.busy || p.status === 'ingesting' || p.status === 'uploading' ? 'A job is running on this field; detect again once it has finished.' : null;
  const areaPx = Number(minAreaNm2) / (p.afmPixelNm * p.afmPixelNm);

  async function send(settings: unknown) {
    setSending(true);
    setMsg(null);
    try {
      await saveDetectionSettings(p.fieldId, { settings, expectedVersion: p.version });
      setMsg({ ok: true, text: 'Detection queued. The page reloads to show its progress…' });
      setTimeout(() => window.location.reload(), 600);
    } catch (e) {
      setMsg({ ok: false, text: errorText(e) });
    } finally {
      setSending(false);
    }
  }

  function detectAgain(e: React.FormEvent) {
    e.preventDefault();
    const threshold = method === 'robust' ? { method, k: Number(k) } : method === 'manual' ? { method, thresholdNm: Number(thresholdNm) } : { method };
    const parsed = DetectionSettings.safeParse({
      threshold, minHeightNm: Number(minHeightNm), minAreaNm2: Number(minAreaNm2), beadMinHeightNm: Number(beadMinHeightNm), levellingOrder,
    });
    if (!parsed.success) return setMsg({ ok: false, text: `${parsed.error.issues[0].message}.` });
    void send(parsed.data);
  }

  const used = p.used;
  return (
    <div className="card text-sm space-y-3" data-testid="detection-settings">
      <h2>Vesicle detection</h2>
      {used ? (
        <dl className="grid grid-cols-2 gap-y-1">
          <dt className="text-mica-600">Settings</dt><dd>{used.source === 'analyst' ? "analyst's" : 'automatic defaults'}</dd>
          <dt className="text-mica-600">Threshold</dt>
          <dd>{METHOD_WORDS[used.threshold.method]}{used.threshold.method === 'robust' ? `, k = ${n(used.threshold.k)} × σ` : ''}{p.lastThresholdNm != null ? ` → ${n(p.lastThresholdNm, 2)} nm` : ''}</dd>
          <dt className="text-mica-600">Smallest vesicle height</dt><dd>{n(used.minHeightNm)} nm</dd>
          <dt className="text-mica-600">Smallest vesicle area</dt><dd>{n(used.minAreaNm2, 0)} nm² ({n(used.minAreaPx, 2)} px)</dd>
          <dt className="text-mica-600">Bead cut-off</dt><dd>{n(used.beadMinHeightNm)} nm</dd>
          <dt className="text-mica-600">Levelling</dt><dd>{used.levellingOrder === 2 ? 'order 2 (bow)' : 'order 1 (plane)'}</dd>
          {p.counts && (<><dt className="text-mica-600">Found</dt><dd>{p.counts.vesicles} vesicles, {p.counts.fiducials} fiducial candidates (counts)</dd></>)}
        </dl>
      ) : (
        <p className="text-mica-600">{p.counts ? 'This detection was made before settings were recorded (automatic defaults).' : 'Settings show once the field is processed.'}</p>
      )}
      {p.canAnalyse && (
        <form className="space-y-2 border-t border-mica-100 pt-3" onSubmit={detectAgain} aria-label="Detection settings">
          <label className="block"><span className="field-label">Threshold method</span>
            <select className="input w-full" value={method} onChange={(e) => setMethod(e.target.value as typeof method)} name="method">
              <option value="robust">Background + k × σ</option>
              <option value="otsu">Otsu (histogram split)</option>
              <option value="manual">Fixed height</option>
            </select>
          </label>
          {method === 'robust' && (
            <label className="block"><span className="field-label">k (× σ, 1–10)</span>
              <input className="input w-full" name="k" type="number" min={1} max={10} step={0.1} value={k} onChange={(e) => setK(e.target.value)} /></label>
          )}
          {method === 'manual' && (
            <label className="block"><span className="field-label">Threshold (nm above the substrate)</span>
              <input className="input w-full" name="thresholdNm" type="number" min={0} step={0.1} value={thresholdNm} onChange={(e) => setThresholdNm(e.target.value)} /></label>
          )}
          <label className="block"><span className="field-label">Smallest vesicle height (nm)</span>
            <input className="input w-full" name="minHeightNm" type="number" min={0} step={0.1} value={minHeightNm} onChange={(e) => setMinHeightNm(e.target.value)} /></label>
          <label className="block"><span className="field-label">Smallest vesicle area (nm²)</span>
            <input className="input w-full" name="minAreaNm2" type="number" min={0} step={1} value={minAreaNm2} onChange={(e) => setMinAreaNm2(e.target.value)} />
            <span className="text-xs text-mica-600">{Number.isFinite(areaPx) ? `${n(areaPx, 2)} px at ${n(p.afmPixelNm, 2)} nm per pixel` : ''}</span></label>
          <label className="block"><span className="field-label">Bead cut-off height (nm)</span>
            <input className="input w-full" name="beadMinHeightNm" type="number" min={1} step={1} value={beadMinHeightNm} onChange={(e) => setBeadMinHeightNm(e.target.value)} />
            <span className="text-xs text-mica-600">Particles taller than this are offered as fiducial candidates, not counted as vesicles.</span></label>
          <label className="block"><span className="field-label">Levelling</span>
            <select className="input w-full" name="levellingOrder" value={levellingOrder} onChange={(e) => setLevellingOrder(Number(e.target.value) as 1 | 2)}>
              <option value={1}>Order 1: plane</option>
              <option value={2}>Order 2: bow</option>
            </select>
          </label>
          <p className="notice notice-caution">Detecting again replaces this field's vesicles and fiducial candidates. Linking must be re-run afterwards: the field returns to Registered (or Ready without a registration).</p>
          {blocked && <p className="text-mica-600" role="note">{blocked}</p>}
          <div className="flex gap-2 flex-wrap">
            <button type="submit" className="btn" disabled={sending || blocked != null}>Detect again</button>
            <button type="button" className="btn btn-quiet" disabled={sending || blocked != null} onClick={() => void send(null)}>Use defaults and detect again</button>
          </div>
        </form>
      )}
      {msg && <p className={msg.ok ? 'text-cap-600' : 'notice notice-error'} role={msg.ok ? 'status' : 'alert'}>{msg.text}</p>}
    </div>
  );
}
