import { useState } from 'react';
import { savePanel } from '../../lib/api-client/routes';
import { errorText } from '../../lib/api-client/http';

interface Channel { marker: string; antibodyClone: string; fluorophore: string; excitationNm: number | null; emissionNm: number | null }

/** Biologists record the study's marker panel: one row per fluorescence channel, in file order. */
export default function PanelEditor({ studyId, initial }: { studyId: string; initial: Channel[] }) {
  const [rows, setRows] = useState<Channel[]>(initial.length ? initial : [{ marker: '', antibodyClone: '', fluorophore: '', excitationNm: null, emissionNm: null }]);
  const [msg, setMsg] = useState<{ ok: boolean; text: string } | null>(null);
  const set = (i: number, k: keyof Channel, v: string) =>
    setRows(rows.map((r, j) => (j !== i ? r : { ...r, [k]: k.endsWith('Nm') ? (v === '' ? null : Number(v)) : v })));
  async function save() {
    try {
      await savePanel(studyId, rows);
      setMsg({ ok: true, text: 'Panel saved.' });
    } catch (e) {
      setMsg({ ok: false, text: errorText(e) });
    }
  }
  return (
    <div className="space-y-2 text-sm">
      <table className="data-table w-full">
        <thead><tr><th>Ch</th><th>Marker</th><th>Antibody clone</th><th>Fluorophore</th><th>Ex (nm)</th><th>Em (nm)</th><th></th></tr></thead>
        <tbody>
          {rows.map((r, i) => (
            <tr key={i}>
              <td>{i + 1}</td>
              {(['marker', 'antibodyClone', 'fluorophore', 'excitationNm', 'emissionNm'] as const).map((k) => (
                <td key={k}><input className="input" aria-label={`${k} of channel ${i + 1}`} value={r[k] ?? ''} inputMode={k.endsWith('Nm') ? 'decimal' : undefined} onChange={(e) => set(i, k, e.target.value)} /></td>
              ))}
              <td><button type="button" className="text-glow-600 underline" onClick={() => setRows(rows.filter((_, j) => j !== i))}>remove</button></td>
            </tr>
          ))}
        </tbody>
      </table>
      <div className="flex gap-2">
        <button type="button" className="btn btn-quiet" onClick={() => setRows([...rows, { marker: '', antibodyClone: '', fluorophore: '', excitationNm: null, emissionNm: null }])}>Add channel</button>
        <button type="button" className="btn" onClick={save}>Save panel</button>
      </div>
      {msg && <p className={`notice ${msg.ok ? 'notice-ok' : 'notice-error'}`} role="status">{msg.text}</p>}
    </div>
  );
}
