import { useState } from 'react';
import { describeRule, type MarkerPositivitySetting, type MarkerPositivityUsed } from '../../lib/schemas/positivitySettings';
import { POSITIVITY_K_MAX, POSITIVITY_K_MIN } from '../../lib/schemas/positivity';
import { relinkFields, savePositivity } from '../../lib/api-client/routes';
import { errorText } from '../../lib/api-client/http';

interface Row extends MarkerPositivitySetting { channelIndex: number }
interface OtherField { id: string; name: string; sampleCode: string; status: 'linked' | 'approved'; markers: { marker: string; used: MarkerPositivityUsed | null }[] }
interface Props { studyId: string; canEdit: boolean; markers: Row[]; fieldsLinkedWithOtherSettings: OtherField[] }

const fmtCounts = (v: number | null) => (v == null ? '–' : `${Number(v.toPrecision(6))} counts`);

/**
 * Per marker: k (the calibrated z to exceed), or a threshold set by hand (counts of joint amplitude); then the fields whose current
 * results were linked with other settings, with a button to link them again.
 */
export default function PositivitySettings({ studyId, canEdit, markers, fieldsLinkedWithOtherSettings }: Props) {
  // inputs hold text so a half-typed number is not lost; the server validates
  const [rows, setRows] = useState(markers.map((m) => ({ ...m, kText: String(m.positivityK), manualText: m.manualThresholdCounts == null ? '' : String(m.manualThresholdCounts) })));
  const [others, setOthers] = useState(fieldsLinkedWithOtherSettings);
  const [msg, setMsg] = useState<{ ok: boolean; text: string } | null>(null);
  const [busy, setBusy] = useState(false);
  const set = (i: number, patch: Partial<(typeof rows)[number]>) => setRows(rows.map((r, j) => (j === i ? { ...r, ...patch } : r)));

  async function save() {
    setBusy(true);
    const body = { markers: rows.map((r) => ({ marker: r.marker, positivityK: r.kText.trim() === '' ? null : Number(r.kText), manualThresholdCounts: r.manualText.trim() === '' ? null : Number(r.manualText) })) };
    try {
      const data = await savePositivity(studyId, body);
      setOthers(data.fieldsLinkedWithOtherSettings);
      setMsg({ ok: true, text: 'Thresholds saved. Fields already linked keep their results until they are linked again.' });
    } catch (e) {
      setMsg({ ok: false, text: errorText(e) });
    } finally {
      setBusy(false);
    }
  }
  async function relink() {
    setBusy(true);
    const ids = others.filter((f) => f.status === 'linked').map((f) => f.id);
    try {
      const data = await relinkFields(studyId, ids);
      setOthers(others.filter((f) => !data.queued.includes(f.id)));
      setMsg({ ok: true, text: `${data.queued.length} field(s) queued for linking; their pages show the progress.` });
    } catch (e) {
      setMsg({ ok: false, text: errorText(e) });
    } finally {
      setBusy(false);
    }
  }
  const linked = others.filter((f) => f.status === 'linked');
  const approved = others.filter((f) => f.status === 'approved');

  return (
    <div className="space-y-3 text-sm" data-testid="positivity-settings">
      <p className="text-mica-600">
        A vesicle is called positive for a marker when its joint amplitude stands above camera noise: its z (amplitude over
        its standard error), calibrated at empty places of the same frame, exceeds k (default 2.58: one unlabelled
        vesicle in 200 called positive by noise, one-sided p &lt; 0.005). With an isotype or secondary-only
        control linked, the amplitude must also exceed the control vesicles&apos; 0.99 quantile. A threshold set by hand
        (counts) replaces both.
      </p>
      <table className="data-table w-full">
        <thead><tr><th>Marker</th><th>k (calibrated z above)</th><th>Threshold set by hand (counts)</th></tr></thead>
        <tbody>
          {rows.map((r, i) => (
            <tr key={r.marker}>
              <td className="font-semibold">{r.marker}</td>
              <td>
                {canEdit
                  ? <input className="input w-24" type="number" min={POSITIVITY_K_MIN} max={POSITIVITY_K_MAX} step={0.01} aria-label={`k for ${r.marker}`} value={r.kText} onChange={(e) => set(i, { kText: e.target.value })} />
                  : r.positivityK}
              </td>
              <td>
                {canEdit
                  ? <input className="input w-36" type="number" min={0} step="any" placeholder="derived" aria-label={`threshold set by hand for ${r.marker} (counts)`} value={r.manualText} onChange={(e) => set(i, { manualText: e.target.value })} />
                  : fmtCounts(r.manualThresholdCounts)}
                {r.manualText.trim() !== '' && <span className="block text-xs text-mica-600">replaces the derived threshold; k is not used</span>}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
      {canEdit && <button type="button" className="btn" disabled={busy || rows.length === 0} onClick={save}>Save thresholds</button>}
      {msg && <p className={`notice ${msg.ok ? 'notice-ok' : 'notice-error'}`} role="status">{msg.text}</p>}
      {others.length > 0 && (
        <div className="space-y-2 border-t border-mica-100 pt-2" data-testid="linked-with-other-settings">
          <h3 className="font-semibold">Fields linked with other settings</h3>
          <ul className="space-y-1">
            {others.map((f) => (
              <li key={f.id}>
                <a href={`/fields/${f.id}`}>{f.sampleCode} · {f.name}</a> <span className="text-xs text-mica-600">{f.status}</span>
                <span className="block text-xs text-mica-600">
                  {f.markers.map((m) => `${m.marker}: ${m.used ? `${describeRule(m.used)}, ${fmtCounts(m.used.thresholdCounts)}` : 'not linked'}`).join('; ')}
                </span>
              </li>
            ))}
          </ul>
          {approved.length > 0 && (
            <p className="notice notice-caution text-xs">
              {approved.length} approved field(s) keep their results: send them back from their field page before linking them again.
            </p>
          )}
          {canEdit && linked.length > 0 && (
            <button type="button" className="btn" disabled={busy} onClick={relink}>Link {linked.length} field(s) again with these settings</button>
          )}
        </div>
      )}
    </div>
  );
}
