/**
 * A short memory, per web process, of the facts every signed-in request checks before its own work: whom the
 * session cookie names, that person's role and active flag, and their role in a study; and two small facts most
 * results requests read: a study's marker panel and a sample's study. Read from PostgreSQL on
 * each request they cost two to three round trips, most of a small request's cost under load
 * (docs/benchmarks.md, "Load").
 *
 * Freshness, which access rules need:
 * - Triggers on `users`, `study_members` (migration 0004), `marker_channels` and `samples` (0005) announce every change on the channel
 *   `heightlight_access`, whoever makes it; each process listens and forgets the named entries.
 * - The process that makes a change also forgets at once ({@link AccessCache.forget}), so its own next request
 *   never sees the old row, even before the announcement arrives.
 * - While the listening connection is down, nothing is remembered (every check reads the database), and all is
 *   forgotten when it comes back. An entry also expires after `ttlMs` whatever happens.
 */
import pg from 'pg';
import { LRUCache } from 'lru-cache';
import type { Role } from './permissions';

export const ACCESS_CHANNEL = 'heightlight_access';

/** `sessionVersion`: sessions issued under an older version are ended (see users.sessionVersion). */
export interface CachedUser { id: string; email: string; name: string; role: Role; active: boolean; sessionVersion?: number }
export interface CachedMembership { role: string | null }
/** A study's marker panel in channel order (what every results reply labels its columns with). */
export interface CachedPanel { channels: { channelIndex: number; marker: string }[] }
/** The two facts of a sample that never change: its study and its code. */
export interface CachedSample { studyId: string; code: string }
/** A decoded session cookie: the user id it names and when it stops being valid (ms since epoch). */
export interface CachedToken { uid: string; expiresAtMs: number; sv?: number }

export interface AccessCacheOptions {
  /** An entry is read again after this long at most (ms). */
  ttlMs?: number;
  /** Entries per kind. */
  max?: number;
  /** Wait before reconnecting a lost listening connection (ms). */
  retryMs?: number;
}

export class AccessCache {
  private readonly users: LRUCache<string, CachedUser>;
  private readonly memberships: LRUCache<string, CachedMembership>;
  private readonly tokens: LRUCache<string, CachedToken>;
  private readonly panels: LRUCache<string, CachedPanel>;
  private readonly samples: LRUCache<string, CachedSample>;
  private listener: pg.Client | null = null;
  private listening = false;
  private stopped = false;
  private retry: NodeJS.Timeout | null = null;
  /** Counts forgettings, so a read that raced one is not remembered. */
  private generation = 0;

  constructor(private readonly databaseUrl: string, private readonly opts: AccessCacheOptions = {}) {
    const ttl = opts.ttlMs ?? 30_000;
    const max = opts.max ?? 10_000;
    this.users = new LRUCache({ max, ttl });
    this.memberships = new LRUCache({ max, ttl });
    this.panels = new LRUCache({ max, ttl });
    this.samples = new LRUCache({ max, ttl });
    // a token's content never changes; it is kept until its own expiry (checked on read) or pushed out
    this.tokens = new LRUCache({ max });
  }

  /** Starts listening (idempotent). Until the listening connection is up, nothing is remembered. */
  start(): void {
    if (this.listener || this.stopped) return;
    const client = new pg.Client({ connectionString: this.databaseUrl, connectionTimeoutMillis: 5000 });
    this.listener = client;
    const lost = (why: string) => {
      if (this.listener !== client) return;
      if (this.listening) console.error(`[access-cache] listening connection lost (${why}); reading access from the database until it is back`);
      this.listening = false;
      this.listener = null;
      this.clear();
      client.end().catch(() => undefined);
      if (!this.stopped) this.retry = setTimeout(() => this.start(), this.opts.retryMs ?? 1000).unref();
    };
    client.on('error', (e) => lost(e.message));
    client.on('end', () => lost('closed'));
    client.on('notification', (n) => { if (n.channel === ACCESS_CHANNEL) this.onAnnouncement(n.payload ?? ''); });
    client.connect()
      .then(() => client.query(`LISTEN ${ACCESS_CHANNEL}`))
      .then(() => {
        if (this.listener !== client) return;
        this.clear(); // anything learnt before now could predate a missed announcement
        this.listening = true;
      })
      .catch((e: Error) => lost(e.message));
  }

  /** Stops listening and forgets everything (tests, shutdown). */
  async stop(): Promise<void> {
    this.stopped = true;
    if (this.retry) clearTimeout(this.retry);
    const c = this.listener;
    this.listener = null;
    this.listening = false;
    this.clear();
    await c?.end().catch(() => undefined);
  }

  /** Whether entries are being remembered (the listening connection is up). */
  get active(): boolean {
    return this.listening;
  }

  /** The user for `id`, from memory or from `load` (which reads the database). */
  async user(id: string, load: () => Promise<CachedUser | null>): Promise<CachedUser | null> {
    return this.through(this.users, id, load);
  }

  /** The study role of `userId` in `studyId` ({role: null} when not a member); null when there is no such study. */
  async membership(studyId: string, userId: string, load: () => Promise<CachedMembership | null>): Promise<CachedMembership | null> {
    return this.through(this.memberships, `${studyId}:${userId}`, load);
  }

  /** A study's marker panel (forgotten when any of its channels changes). */
  async panel(studyId: string, load: () => Promise<CachedPanel | null>): Promise<CachedPanel | null> {
    return this.through(this.panels, studyId, load);
  }

  /** A sample's study and code (these never change; the entry goes with its time to live or a deletion). */
  async sample(sampleId: string, load: () => Promise<CachedSample | null>): Promise<CachedSample | null> {
    return this.through(this.samples, sampleId, load);
  }

  /** The decoded session for a cookie header, from memory while it is valid, else from `decode`. */
  async token(cookieKey: string, decode: () => Promise<CachedToken | null>): Promise<CachedToken | null> {
    const hit = this.listening ? this.tokens.get(cookieKey) : undefined;
    if (hit && hit.expiresAtMs > Date.now()) return hit;
    const fresh = await decode();
    if (fresh && this.listening) this.tokens.set(cookieKey, fresh);
    return fresh;
  }

  /** Forgets what this process knows of a user or a membership (call after changing it). */
  forget(what: { userId?: string; studyId?: string; memberId?: string; panelOf?: string; sampleId?: string }): void {
    this.generation++;
    if (what.userId) this.users.delete(what.userId);
    if (what.studyId && what.memberId) this.memberships.delete(`${what.studyId}:${what.memberId}`);
    if (what.panelOf) this.panels.delete(what.panelOf);
    if (what.sampleId) this.samples.delete(what.sampleId);
  }

  private onAnnouncement(payload: string): void {
    const [kind, a, b] = payload.split(':');
    if (kind === 'user') this.forget({ userId: a });
    else if (kind === 'member') this.forget({ studyId: a, memberId: b });
    else if (kind === 'panel') this.forget({ panelOf: a });
    else if (kind === 'sample') this.forget({ sampleId: a });
    else this.clear();
  }

  private clear(): void {
    this.generation++;
    this.users.clear();
    this.memberships.clear();
    this.tokens.clear();
    this.panels.clear();
    this.samples.clear();
  }

  private async through<V extends object>(cache: LRUCache<string, V>, key: string, load: () => Promise<V | null>): Promise<V | null> {
    if (!this.listening) return load();
    const hit = cache.get(key);
    if (hit) return hit;
    // an announcement that arrives while the row is being read may describe a newer row than the one read:
    // remember the row only if nothing about this key was forgotten in between
    const before = this.generation;
    const row = await load();
    if (row && this.listening && before === this.generation) cache.set(key, row);
    return row;
  }
}
