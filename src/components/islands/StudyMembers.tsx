import { useEffect, useState } from 'react';
import { listUsers, setStudyMember } from '../../lib/api-client/routes';
import { errorText } from '../../lib/api-client/http';

interface Member { userId: string; name: string; email: string; role: string }
interface Person { id: string; name: string; email: string; role: string; active: boolean }

/** Admin: add people to a study with their study role, change it, or remove them. */
export default function StudyMembers({ studyId, members }: { studyId: string; members: Member[] }) {
  const [people, setPeople] = useState<Person[]>([]);
  const [msg, setMsg] = useState<{ ok: boolean; text: string } | null>(null);
  const [who, setWho] = useState('');
  const [role, setRole] = useState('biologist');
  useEffect(() => {
    const stop = new AbortController();
    listUsers(stop.signal).then((r) => setPeople(r.users), (e) => { if (!stop.signal.aborted) setMsg({ ok: false, text: errorText(e, 'The list of people could not be loaded; reload the page.') }); });
    return () => stop.abort();
  }, []);

  async function put(userId: string, r: string | null) {
    try {
      await setStudyMember(studyId, userId, r);
    } catch (e) {
      return setMsg({ ok: false, text: errorText(e) });
    }
    window.location.reload();
  }
  const outside = people.filter((p) => p.active && p.role !== 'admin' && !members.some((m) => m.userId === p.id));

  return (
    <div className="space-y-3 text-sm">
      <ul className="space-y-1">
        {members.map((m) => (
          <li key={m.userId} className="flex items-center gap-2">
            <span className="flex-1">{m.name} <span className="text-mica-400">{m.email}</span></span>
            <select className="input w-auto" aria-label={`Study role of ${m.email}`} value={m.role} onChange={(e) => put(m.userId, e.target.value)}>
              <option value="biologist">biologist</option><option value="analyst">analyst</option><option value="collaborator">collaborator</option>
            </select>
            <button type="button" className="text-glow-600 underline" onClick={() => put(m.userId, null)}>remove</button>
          </li>
        ))}
      </ul>
      <div className="flex gap-2 items-end">
        <select className="input" aria-label="Person to add" value={who} onChange={(e) => setWho(e.target.value)}>
          <option value="">add a person…</option>
          {outside.map((p) => <option key={p.id} value={p.id}>{p.name} ({p.email})</option>)}
        </select>
        <select className="input w-auto" aria-label="Study role" value={role} onChange={(e) => setRole(e.target.value)}>
          <option value="biologist">biologist</option><option value="analyst">analyst</option><option value="collaborator">collaborator</option>
        </select>
        <button type="button" className="btn" disabled={!who} onClick={() => put(who, role)}>Add</button>
      </div>
      {msg && <p className={`notice ${msg.ok ? 'notice-ok' : 'notice-error'}`}>{msg.text}</p>}
    </div>
  );
}
