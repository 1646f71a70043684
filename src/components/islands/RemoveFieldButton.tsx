import { useState } from 'react';
import { removeField } from '../../lib/api-client/routes';
import { errorText } from '../../lib/api-client/http';

/**
 * Removes a field that is neither approved nor released (for instance a failed upload that would block its
 * sample's release), after the person confirms by name. The server re-checks everything and answers 409 otherwise.
 */
export default function RemoveFieldButton({ fieldId, name, sampleCode, version, studyId }: {
  fieldId: string; name: string; sampleCode: string; version: number; studyId: string;
}) {
  const [msg, setMsg] = useState<{ ok: boolean; text: string } | null>(null);
  const [busy, setBusy] = useState(false);
  async function remove() {
    const question = `Remove field "${name}" of sample ${sampleCode}? Its files, tiles, registrations, linking and vesicles are deleted for good.`;
    if (!window.confirm(question)) return;
    setBusy(true);
    try {
      await removeField(fieldId, version);
      setMsg({ ok: true, text: `Field ${name} was removed. Returning to the study…` });
      setTimeout(() => window.location.assign(`/studies/${studyId}`), 800);
    } catch (e) {
      setMsg({ ok: false, text: errorText(e, 'The server could not be reached; nothing was removed. Try again.') });
    } finally {
      setBusy(false);
    }
  }
  return (
    <div className="card text-sm space-y-2">
      <h2>Remove field</h2>
      <p className="text-mica-600">Only for a field that is not approved and not part of released results, such as a failed upload.</p>
      <button type="button" className="btn btn-quiet text-glow-600" disabled={busy} onClick={remove}>Remove field {name}</button>
      {msg && <p className={msg.ok ? 'text-cap-600' : 'text-glow-600'} role="status">{msg.text}</p>}
    </div>
  );
}
