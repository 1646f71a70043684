import { useState, type FormEvent } from 'react';
import { createStudy } from '../../lib/api-client/routes';
import { errorText } from '../../lib/api-client/http';

/** Admin: create a study, then open it to add members and the marker panel. */
export default function NewStudy() {
  const [msg, setMsg] = useState<string | null>(null);
  async function submit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const f = new FormData(e.currentTarget);
    try {
      const body = await createStudy({ name: String(f.get('name') ?? ''), description: String(f.get('description') ?? '') });
      window.location.href = `/studies/${body.id}`;
    } catch (e) {
      setMsg(errorText(e));
    }
  }
  return (
    <form method="post" onSubmit={submit} className="card grid gap-3 md:grid-cols-[1fr_2fr_auto] items-end" aria-label="New study">
      <div><label className="field-label" htmlFor="ns-name">Study name</label><input id="ns-name" name="name" className="input" required maxLength={200} /></div>
      <div><label className="field-label" htmlFor="ns-desc">Description</label><input id="ns-desc" name="description" className="input" maxLength={5000} /></div>
      <button className="btn" type="submit">Create study</button>
      {msg && <p className="notice notice-error md:col-span-3">{msg}</p>}
    </form>
  );
}
