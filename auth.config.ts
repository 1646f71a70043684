/**
 * Auth.js configuration (auth-astro): e-mail + password only, argon2id hashes, failed sign-ins slowed by growing
 * delays (lib/auth/rateLimit.ts). Sessions are JWT cookies carrying the user id and the session version
 * (`sv`); raising users.session_version ends them (lib/auth/sessionVersion.ts), and signing out does that.
 */
import Credentials from '@auth/core/providers/credentials';
import { CredentialsSignin } from '@auth/core/errors';
import { defineConfig } from 'auth-astro';
import { eq } from 'drizzle-orm';
import { z } from 'zod';
import { getDb } from './src/lib/db/client';
import { users } from './src/lib/db/schema';
import { verifyPassword, verifyAgainstDummy } from './src/lib/auth/passwords';
import { signInVerdict, recordSignIn } from './src/lib/auth/rateLimit';
import { currentSessionVersion, endAllSessions } from './src/lib/auth/sessionVersion';
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
  events: {
    // signing out ends every session of the person, not only this browser's cookie (a copied cookie dies too)
    async signOut(message) {
      const uid = 'token' in message ? message.token?.uid : undefined;
      if (typeof uid === 'string') await endAllSessions(await getDb(), uid);
    },
  },
  providers: [
    Credentials({
      credentials: { email: { label: 'E-mail' }, password: { label: 'Password', type: 'password' } },
      async authorize(raw) {
        const parsed = SignInInput.safeParse(raw);
        if (!parsed.success) return null;
        const { email, password } = parsed.data;
        const ip = currentIp();
        const db = await getDb();
        if (!(await signInVerdict(db, email, ip)).allowed) {
          await audit(db, { action: 'sign_in.blocked', actorEmail: email, ip });
          throw new TooManyAttempts();
        }
        const [user] = await db.select().from(users).where(eq(users.email, email));
        // an unknown, inactive or password-less account costs one argon2 verification too, so the reply time
        // does not tell which addresses have accounts
        const usable = !!user?.passwordHash && user.active;
        const ok = usable ? await verifyPassword(user.passwordHash!, password) : await verifyAgainstDummy(password);
        await recordSignIn(db, email, ip, ok);
        await audit(db, { action: ok ? 'sign_in.succeeded' : 'sign_in.failed', actorId: ok ? user!.id : null, actorEmail: email, ip });
        if (!ok) return null;
        return { id: user!.id, email: user!.email, name: user!.name, sessionVersion: user!.sessionVersion };
      },
    }),
  ],
  callbacks: {
    async jwt({ token, user }) {
      if (user?.id) {
        token.uid = user.id;
        token.sv = (user as { sessionVersion?: number }).sessionVersion ?? 0;
        return token;
      }
      // Auth.js's own session route: a session whose version was raised has ended
      if (typeof token.uid === 'string' && (await currentSessionVersion(await getDb(), token.uid)) !== ((token.sv as number | undefined) ?? 0)) return null;
      return token;
    },
    session({ session, token }) {
      (session.user as { id?: string }).id = token.uid as string;
      return session;
    },
  },
});
