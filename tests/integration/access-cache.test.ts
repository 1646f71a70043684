/**
 * The per-process access memory and the named SELECTs, against the real PostgreSQL: two caches stand for two
 * web processes; a change made through a third connection (as psql or another process would) must make both
 * forget the row, through the triggers of migration 0004 and LISTEN/NOTIFY.
 */
import { describe, expect, afterAll } from 'vitest';
import { randomUUID } from 'node:crypto';
import { eq, sql } from 'drizzle-orm';
import { AccessCache, type CachedUser } from '../../src/lib/auth/accessCache';
import { createDb, type Db } from '../../src/lib/db/client';
import { markerChannels, studies, studyMembers, users } from '../../src/lib/db/schema';
import { test, it } from '../support/fixtures';

// a database of this file's own (nothing here goes through the app server): its triggers and NOTIFYs are this file's alone
let url: string;
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
let db: Db;
let userId: string;
let studyId: string;

async function untilActive(c: AccessCache) {
  const until = Date.now() + 10_000;
  while (!c.active && Date.now() < until) await sleep(20);
  expect(c.active).toBe(true);
}

/** A loader that counts its database reads. */
function counted(load: () => Promise<CachedUser | null>) {
  const f = async () => { f.reads++; return load(); };
  f.reads = 0;
  return f;
}

test.beforeAll(async ({ ownDb }) => {
  ({ url, db } = ownDb);
  const [u] = await db.insert(users).values({ email: `cache-${randomUUID()}@example.test`, name: 'Cache Probe', role: 'analyst', passwordHash: 'x' }).returning();
  userId = u.id;
  const [s] = await db.insert(studies).values({ name: `cache probe ${Date.now()}` }).returning();
  studyId = s.id;
});

describe('access memory shared by two processes', () => {
  let a: AccessCache;
  let b: AccessCache;
  test.beforeAll(() => {
    a = new AccessCache(url);
    b = new AccessCache(url);
  });
  afterAll(async () => { await a.stop(); await b.stop(); });

  const readUser = async () => {
    const [r] = await db.select({ id: users.id, email: users.email, name: users.name, role: users.role, active: users.active }).from(users).where(eq(users.id, userId));
    return r ?? null;
  };

  it('reads the database every time until it listens, then once', async () => {
    const load = counted(readUser);
    await a.user(userId, load);
    await a.user(userId, load);
    expect(load.reads).toBe(2); // not started: nothing remembered
    a.start();
    b.start();
    await untilActive(a);
    await untilActive(b);
    await a.user(userId, load);
    await a.user(userId, load);
    await a.user(userId, load);
    expect(load.reads).toBe(3);
  });

  it('forgets a user in every process when the row changes, whoever changes it', async () => {
    const loadA = counted(readUser);
    const loadB = counted(readUser);
    expect((await a.user(userId, loadA))!.role).toBe('analyst');
    expect((await b.user(userId, loadB))!.role).toBe('analyst');
    // a change through another connection, as psql or another web process would make it
    await db.update(users).set({ role: 'biologist', active: false }).where(eq(users.id, userId));
    const until = Date.now() + 5000;
    let seenA: CachedUser | null = null;
    let seenB: CachedUser | null = null;
    while (Date.now() < until) {
      seenA = await a.user(userId, loadA);
      seenB = await b.user(userId, loadB);
      if (seenA?.role === 'biologist' && seenB?.role === 'biologist') break;
      await sleep(10);
    }
    expect(seenA).toMatchObject({ role: 'biologist', active: false });
    expect(seenB).toMatchObject({ role: 'biologist', active: false });
  });

  it('forgets a membership when it is added, changed or removed', async () => {
    const readRole = async () => {
      const [r] = await db.select({ role: studyMembers.role }).from(studyMembers).where(sql`${studyMembers.studyId} = ${studyId} and ${studyMembers.userId} = ${userId}`);
      return { role: r?.role ?? null };
    };
    const waitFor = async (role: string | null) => {
      const until = Date.now() + 5000;
      let seen = await a.membership(studyId, userId, readRole);
      while (seen?.role !== role && Date.now() < until) {
        await sleep(10);
        seen = await a.membership(studyId, userId, readRole);
      }
      return seen?.role;
    };
    expect(await waitFor(null)).toBe(null);
    await db.insert(studyMembers).values({ studyId, userId, role: 'analyst' });
    expect(await waitFor('analyst')).toBe('analyst');
    await db.update(studyMembers).set({ role: 'biologist' }).where(sql`${studyMembers.studyId} = ${studyId} and ${studyMembers.userId} = ${userId}`);
    expect(await waitFor('biologist')).toBe('biologist');
    await db.delete(studyMembers).where(sql`${studyMembers.studyId} = ${studyId} and ${studyMembers.userId} = ${userId}`);
    expect(await waitFor(null)).toBe(null);
  });

  it('forgets a study\'s marker panel when a channel changes', async () => {
    const readPanel = async () => ({ channels: (await db.select({ channelIndex: markerChannels.channelIndex, marker: markerChannels.marker }).from(markerChannels).where(eq(markerChannels.studyId, studyId))) });
    expect((await a.panel(studyId, readPanel))!.channels).toEqual([]);
    await db.insert(markerChannels).values({ studyId, channelIndex: 0, marker: 'CD63', fluorophore: 'probe', emissionNm: 520 });
    const until = Date.now() + 5000;
    let seen = await a.panel(studyId, readPanel);
    while (seen!.channels.length === 0 && Date.now() < until) {
      await sleep(10);
      seen = await a.panel(studyId, readPanel);
    }
    expect(seen!.channels).toEqual([{ channelIndex: 0, marker: 'CD63' }]);
    await db.delete(markerChannels).where(eq(markerChannels.studyId, studyId));
  });

  it('does not remember a row read while the same key was being forgotten', async () => {
    a.forget({ userId });
    const stale = { id: userId, email: 'old@example.test', name: 'Old', role: 'analyst' as const, active: true };
    // the forgetting lands while the read is in flight: the row read may predate the change
    await a.user(userId, async () => { a.forget({ userId }); return stale; });
    const load = counted(readUser);
    await a.user(userId, load);
    expect(load.reads).toBe(1);
  });

  it('keeps a decoded session only until the token expires', async () => {
    let decodes = 0;
    const decode = (expiresAtMs: number) => async () => { decodes++; return { uid: userId, expiresAtMs }; };
    await a.token('cookie-1', decode(Date.now() + 60_000));
    await a.token('cookie-1', decode(Date.now() + 60_000));
    expect(decodes).toBe(1);
    await a.token('cookie-2', decode(Date.now() + 30));
    await sleep(60);
    await a.token('cookie-2', decode(Date.now() + 30));
    expect(decodes).toBe(3);
  });

  it('reads the database again once stopped', async () => {
    await b.stop();
    expect(b.active).toBe(false);
    const load = counted(readUser);
    await b.user(userId, load);
    await b.user(userId, load);
    expect(load.reads).toBe(2);
  });
});

describe('SELECTs run as named prepared statements', () => {
  it('prepares each distinct SELECT once per connection and returns the same rows', async () => {
    const one = createDb(url, 1); // one connection, so its session's prepared statements can be listed
    try {
      const q = () => one.select({ id: users.id, role: users.role }).from(users).where(eq(users.id, userId));
      const first = await q();
      const second = await q();
      expect(second).toEqual(first);
      expect(first[0].id).toBe(userId);
      const raw = await one.$client.query('select 1 + $1::int as n', [41]);
      expect(raw.rows[0].n).toBe(42);
      const listed = await one.$client.query(`select statement from pg_prepared_statements where name like 'hl\\_%'`);
      const texts = listed.rows.map((r: { statement: string }) => r.statement);
      expect(texts.filter((t: string) => t.includes('from "users"')).length).toBe(1);
      expect(texts).toContain('select 1 + $1::int as n');
      // writes are never named
      await one.$client.query('update users set name = name where id = $1', [userId]);
      const after = await one.$client.query(`select count(*)::int as n from pg_prepared_statements where statement like 'update%'`);
      expect(after.rows[0].n).toBe(0);
    } finally {
      await one.$client.end();
    }
  });
});
