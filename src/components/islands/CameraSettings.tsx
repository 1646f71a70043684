import { useState } from 'react';
import type { CameraModelSetting } from '../../lib/schemas/cameraModel';
import { saveCamera } from '../../lib/api-client/routes';
import { errorText } from '../../lib/api-client/http';

interface Props { studyId: string; canEdit: boolean; camera: CameraModelSetting | null }

const FIELDS = [
  { key: 'offsetCounts', label: 'Offset (counts)', help: 'what a dark pixel reads' },
  { key: 'gainCountsPerPhoton', label: 'Gain (counts per photon)', help: '1 for a camera that reports photo-electrons' },
  { key: 'readNoiseCounts', label: 'Read noise (counts, RMS)', help: 'from the data sheet or a dark-frame series' },
] as const;

/**
 * The study's camera noise model: the standard error of every amplitude, and so z, p and q of every call, follow from
 * it. Left empty, linking estimates it from each frame and says so in the field's results.
 */
export default function CameraSettings({ studyId, canEdit, camera }: Props) {
  // inputs hold text so a half-typed number is not lost; the server validates
  const [text, setText] = useState<Record<string, string>>(Object.fromEntries(FIELDS.map((f) => [f.key, camera ? String(camera[f.key]) : ''])));
  const [saved, setSaved] = useState(camera);
  const [msg, setMsg] = useState<{ ok: boolean; text: string } | null>(null);
  const [busy, setBusy] = useState(false);

  async function save(clear: boolean) {
    const empty = FIELDS.every((f) => text[f.key].trim() === '');
    const body = { camera: clear || empty ? null : Object.fromEntries(FIELDS.map((f) => [f.key, text[f.key].trim() === '' ? null : Number(text[f.key])])) };
    setBusy(true);
    let data;
    try {
      data = await saveCamera(studyId, body.camera);
    } catch (e) {
      return setMsg({ ok: false, text: errorText(e) });
    } finally {
      setBusy(false);
    }
    setSaved(data.camera);
    if (!data.camera) setText(Object.fromEntries(FIELDS.map((f) => [f.key, ''])));
    setMsg({ ok: true, text: data.camera ? 'Camera model saved. Fields already linked keep their results until they are linked again.' : 'Camera model cleared: linking estimates it from each frame.' });
  }

  return (
    <div className="space-y-3 text-sm" data-testid="camera-settings">
      <p className="text-mica-600">
        A pixel holding N photons reads offset + gain × N counts, with read noise on top. These three values set the standard
        error of every fitted amplitude and so the z, p and q of every call. {saved ? '' : 'Not set: linking estimates them from each frame.'}
      </p>
      <div className="grid gap-3 sm:grid-cols-3">
        {FIELDS.map((f) => (
          <label key={f.key} className="block">
            <span className="block font-semibold">{f.label}</span>
            {canEdit
              ? <input className="input w-full" type="number" step="any" min={0} value={text[f.key]} onChange={(e) => setText({ ...text, [f.key]: e.target.value })} />
              : <span>{saved ? saved[f.key] : 'estimated'}</span>}
            <span className="block text-xs text-mica-600">{f.help}</span>
          </label>
        ))}
      </div>
      {canEdit && (
        <div className="flex gap-2">
          <button type="button" className="btn" disabled={busy} onClick={() => save(false)}>Save camera model</button>
          {saved && <button type="button" className="btn btn-quiet" disabled={busy} onClick={() => save(true)}>Estimate from the frames instead</button>}
        </div>
      )}
      {msg && <p className={`notice ${msg.ok ? 'notice-ok' : 'notice-error'}`} role="status">{msg.text}</p>}
    </div>
  );
}
