import type { Db } from '../../db/client';
import { setPasswordWithToken } from '../../auth/oneTimeLinks';
import { audit } from '../../audit';

/** The invitee (or someone resetting) sets a password with a one-time token; the audit log records which link it was. */
export async function acceptInvitation(db: Db, ip: string, token: string, password: string) {
  const user = await setPasswordWithToken(db, token, password);
  await audit(db, { action: 'user.password_set', actorId: user.id, actorEmail: user.email, targetType: 'user', targetId: user.id, ip, details: { via: user.purpose } });
  return { email: user.email };
}
