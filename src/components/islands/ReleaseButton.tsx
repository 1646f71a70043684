import { useState } from 'react';
import { releaseSample } from '../../lib/api-client/routes';
import { errorText } from '../../lib/api-client/http';

/** Releases a sample's approved results to the study's collaborators as a new version. */
export default function ReleaseButton({ sampleId, code, latestVersion }: { sampleId: string; code: string; latestVersion: number }) {
  const [msg, setMsg] = useState<{ ok: boolean; text: string } | null>(null);
  const [busy, setBusy] = useState(false);
  async function release() {
    if (!window.confirm(`Release the current results of ${code} to the study's collaborators as version ${latestVersion + 1}?`)) return;
    setBusy(true);
    try {
      const body = await releaseSample(sampleId, latestVersion);
      setMsg({ ok: true, text: `Released as version ${body.version}.` });
      setTimeout(() => window.location.reload(), 800);
    } catch (e) {
      setMsg({ ok: false, text: errorText(e) });
    } finally {
      setBusy(false);
    }
  }
  return (
    <span className="inline-flex flex-col gap-1">
      <button type="button" className="btn btn-quiet text-xs" disabled={busy} onClick={release}>Release{latestVersion ? ' again' : ''}</button>
      {msg && <span className={`text-xs ${msg.ok ? 'text-cap-600' : 'text-glow-600'}`} role="status">{msg.text}</span>}
    </span>
  );
}
