/**
 * Auth.js configuration (auth-astro): e-mail + password only, argon2id hashes, failed sign-ins
 * rate-limited per e-mail and per address. Sessions are JWT cookies carrying the user id only.
 */
import Credentials from '@auth/core/providers/credentials';
import { CredentialsSignin } from '@auth/core/errors';
import { defineConfig } from 'auth-astro';
import { eq } from 'drizzle-orm';
import { z } from 'zod';
import { getDb } from './src/lib/db/client';
import { users } from './src/lib/db/schema';
import { verifyPassword } from './src/lib/auth/passwords';
import { isSignInBlocked, recordSignInAttempt } from './src/lib/auth/rateLimit';
import { audit } from './src/lib/audit';
import { currentIp } from './src/lib/http/requestContext';
import { SESSION_MAX_AGE_S } from './src/lib/auth/session';
import { config } from './src/lib/config';

class TooManyAttempts extends CredentialsSignin {
  code = 'too_many_attempts';
}

const SignInInput = z.object({ email: z.string().trim().toLowerCase().email().max(254), password: z.string().min(1).max(1024) });


export default defineConfig({
  secret: config().AUTH_SECRET,
  trustHost: true,
  // renewed by the middleware once an hour old, so a session ends 12 h after the last request
  session: { strategy: 'jwt', maxAge: SESSION_MAX_AGE_S },
  pages: { signIn: '/signin', error: '/signin' },
  providers: [
    Credentials({
      credentials: { email: { label: 'E-mail' }, password: { label: 'Password', type: 'password' } },
      async authorize(raw) {
        const parsed = SignInInput.safeParse(raw);
        if (!parsed.success) return null;
        const { email, password } = parsed.data;
        const ip = currentIp();
        const db = await getDb();
        if (await isSignInBlocked(db, email, ip)) {
          await audit(db, { action: 'sign_in.blocked', actorEmail: email, ip });
          throw new TooManyAttempts();
        }
        const [user] = await db.select().from(users).where(eq(users.email, email));
        const ok = !!user?.passwordHash && user.active && (await verifyPassword(user.passwordHash, password));
        await recordSignInAttempt(db, email, ip, ok);
        await audit(db, { action: ok ? 'sign_in.succeeded' : 'sign_in.failed', actorId: ok ? user!.id : null, actorEmail: email, ip });
        if (!ok) return null;
        return { id: user!.id, email: user!.email, name: user!.name };
      },
    }),
  ],
  callbacks: {
    jwt({ token, user }) {
      if (user?.id) token.uid = user.id;
      return token;
    },
    session({ session, token }) {
      (session.user as { id?: string }).id = token.uid as string;
      return session;
    },
  },
});
