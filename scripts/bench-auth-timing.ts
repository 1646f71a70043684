/**
 * Prints how long sign-in and reset requests take for known and unknown accounts, against a running app
 * (loopback): the two should not tell apart. `HEIGHTLIGHT_APP_URL=http://127.0.0.1:4321 npx tsx scripts/bench-auth-timing.ts`
 * Uses the demo accounts with wrong passwords (signed in correctly every 4 tries, below the delay threshold) and
 * invented addresses; the reset requests count against this address's hourly allowance (10).
 */
const APP = process.env.HEIGHTLIGHT_APP_URL ?? 'http://127.0.0.1:4321';
const KNOWN = ['admin', 'biologist', 'analyst', 'collaborator'].map((r) => `${r}@demo.heightlight.test`);

async function signInMs(email: string): Promise<number> {
  const csrf = await fetch(`${APP}/api/auth/csrf`);
  const cookie = csrf.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ');
  const { csrfToken } = await csrf.json();
  const t0 = performance.now();
  const res = await fetch(`${APP}/api/auth/callback/credentials`, {
    method: 'POST', redirect: 'manual',
    headers: { 'content-type': 'application/x-www-form-urlencoded', 'x-auth-return-redirect': '1', cookie, origin: APP },
    body: new URLSearchParams({ email, password: 'not-the-password-1', csrfToken, callbackUrl: `${APP}/` }),
  });
  await res.text();
  return performance.now() - t0;
}

async function resetMs(email: string): Promise<number> {
  const t0 = performance.now();
  const res = await fetch(`${APP}/api/password-reset`, { method: 'POST', headers: { 'content-type': 'application/json', origin: APP }, body: JSON.stringify({ email }) });
  await res.text();
  return performance.now() - t0;
}

const median = (xs: number[]) => { const s = [...xs].sort((a, b) => a - b); return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2; };
const unknown = (i: number) => `nobody-${Date.now()}-${i}@lab.example`;

/** Signs each demo account in once with its real password: clears its failure count between rounds. */
async function clearDemoFailures(password: string) {
  for (const email of KNOWN) {
    const csrf = await fetch(`${APP}/api/auth/csrf`);
    const cookie = csrf.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ');
    const { csrfToken } = await csrf.json();
    await (await fetch(`${APP}/api/auth/callback/credentials`, {
      method: 'POST', redirect: 'manual',
      headers: { 'content-type': 'application/x-www-form-urlencoded', 'x-auth-return-redirect': '1', cookie, origin: APP },
      body: new URLSearchParams({ email, password, csrfToken, callbackUrl: `${APP}/` }),
    })).text();
  }
}

/**
 * @param rounds - rounds of one wrong sign-in per demo account and as many for unknown addresses (order alternates)
 * @param demoPassword - the demo accounts' password (their failure counts are cleared every 4 rounds)
 */
export async function benchAuthTiming(rounds = 8, demoPassword = 'vesicle-demo-2026'): Promise<Record<string, number>> {
  const known: number[] = [];
  const other: number[] = [];
  await signInMs(unknown(999)); // warm-up: the first unknown sign-in makes the process's dummy hash
  for (let round = 0; round < rounds; round++) {
    for (let i = 0; i < KNOWN.length; i++) {
      const pair = [async () => known.push(await signInMs(KNOWN[i])), async () => other.push(await signInMs(unknown(round * 10 + i)))];
      if (round % 2) pair.reverse();
      for (const step of pair) await step();
    }
    if (round % 4 === 3) await clearDemoFailures(demoPassword);
  }
  const rk: number[] = [];
  const ru: number[] = [];
  for (let i = 0; i < 4; i++) {
    const pair = [async () => rk.push(await resetMs(KNOWN[i])), async () => ru.push(await resetMs(unknown(100 + i)))];
    if (i % 2) pair.reverse();
    for (const step of pair) await step();
  }
  return {
    signInKnownMs: median(known), signInUnknownMs: median(other), resetKnownMs: median(rk), resetUnknownMs: median(ru),
    samplesSignIn: known.length, samplesReset: rk.length,
  };
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const r = await benchAuthTiming();
  for (const [k, v] of Object.entries(r)) console.log(`${k.padEnd(16)} ${v.toFixed(1)} ms (median)`);
}
