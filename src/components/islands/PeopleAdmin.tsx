import { useEffect, useState, type FormEvent } from 'react';
import { roleName } from '../../lib/pages/roleNames';
import { changeUserRole, invitePerson, listUsers } from '../../lib/api-client/routes';
import { errorText } from '../../lib/api-client/http';

interface Person { id: string; email: string; name: string; role: string; active: boolean; pendingInvitation: boolean }
const ROLES = ['biologist', 'analyst', 'collaborator', 'admin'] as const;

/** Admin: list people, invite by e-mail, change roles. */
export default function PeopleAdmin() {
  const [people, setPeople] = useState<Person[]>([]);
  const [msg, setMsg] = useState<{ ok: boolean; text: string } | null>(null);

  async function load() {
    try {
      setPeople((await listUsers()).users);
    } catch (e) {
      setMsg({ ok: false, text: errorText(e, 'The list of people could not be loaded; reload the page.') });
    }
  }
  useEffect(() => { void load(); }, []);

  async function invite(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const f = new FormData(e.currentTarget);
    const form = e.currentTarget;
    try {
      const data = await invitePerson({ email: String(f.get('email') ?? ''), name: String(f.get('name') ?? ''), role: String(f.get('role') ?? '') });
      setMsg({ ok: true, text: `Invitation sent to ${data.email}.` });
      form?.reset?.();
      void load();
    } catch (err) {
      setMsg({ ok: false, text: errorText(err) });
    }
  }

  async function changeRole(id: string, role: string) {
    try {
      await changeUserRole(id, role);
      setMsg({ ok: true, text: 'Role changed.' });
    } catch (e) {
      setMsg({ ok: false, text: errorText(e) });
    }
    void load();
  }

  return (
    <div className="space-y-6">
      <form method="post" onSubmit={invite} className="card grid gap-3 md:grid-cols-4 items-end" aria-label="Invite a person">
        <div><label className="field-label" htmlFor="inv-name">Name</label><input className="input" id="inv-name" name="name" required /></div>
        <div><label className="field-label" htmlFor="inv-email">E-mail</label><input className="input" id="inv-email" name="email" type="email" required /></div>
        <div><label className="field-label" htmlFor="inv-role">Role</label>
          <select className="input" id="inv-role" name="role">{ROLES.map((r) => <option key={r} value={r}>{roleName(r)}</option>)}</select></div>
        <button className="btn" type="submit">Send invitation</button>
      </form>
      {msg && <p className={`notice ${msg.ok ? 'notice-ok' : 'notice-error'}`} role="status">{msg.text}</p>}
      <table className="data-table w-full card">
        <thead><tr><th>Name</th><th>E-mail</th><th>Role</th><th>State</th></tr></thead>
        <tbody>
          {people.map((p) => (
            <tr key={p.id}>
              <td>{p.name}</td><td>{p.email}</td>
              <td>
                <select aria-label={`Role of ${p.email}`} className="input" value={p.role} onChange={(e) => changeRole(p.id, e.target.value)}>
                  {ROLES.map((r) => <option key={r} value={r}>{roleName(r)}</option>)}
                </select>
              </td>
              <td>{!p.active ? 'deactivated' : p.pendingInvitation ? 'invited' : 'active'}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
