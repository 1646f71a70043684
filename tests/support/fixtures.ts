/**
 * Vitest fixtures for the integration and browser tests (`test.extend`, vitest 4.1 builder form). A file takes
 * what it names, in a test (`async ({ db, signedIn }) => ...`) or in a file hook (`test.beforeAll(async ({ db }) => ...)`);
 * each is made on first use and closed by the fixture, never by the file:
 *
 * - `db` (per file): a Drizzle client on the suite's shared database, the one the app server and worker use.
 * - `ownDb` (per file): `{ url, db }` of a database of the file's own, copied from the migrated template with
 *   the demo people and samples (scripts/lib/testDatabases.ts), dropped after the file. For files that work
 *   on the database directly or through in-process/child workers, never through the app server, which stays
 *   bound to the shared database (docs/architecture.md, "Tests").
 * - `signedIn(role)` (per file): the AppClient of a demo role, signed in once per file through Auth.js's real
 *   credentials flow; `signedIn(role, { fresh: true })` signs in anew (a new session, a new audit event).
 * - `browser` (per worker): one Debian Chromium per vitest worker (integration files run one at a time).
 * - `page` (per test): a page in a new browser context, closed after the test; `newPage(options)` opens more,
 *   or one with context options (viewport, downloads), all closed after the test.
 */
import { randomUUID } from 'node:crypto';
import { test as base } from 'vitest';
import type { Browser, BrowserContext, BrowserContextOptions, Page } from 'playwright-core';
import { createDb, type Db } from '../../src/lib/db/client';
import { createDatabaseFromTemplate, dropDatabase } from '../../scripts/lib/testDatabases';
import { launch } from './browser';
import { signedIn as signIn, type AppClient } from './client';
import { DEMO, DEMO_PASSWORD, type DemoRole } from './demo';

function databaseUrl(): string {
  const url = process.env.DATABASE_URL;
  if (!url) throw new Error('DATABASE_URL is not set: run integration tests through npm test');
  return url;
}

export type SignedIn = (role: DemoRole, o?: { fresh?: boolean }) => Promise<AppClient>;
export type NewPage = (options?: BrowserContextOptions) => Promise<Page>;

export const test = base
  .extend('db', { scope: 'file' }, async ({}, { onCleanup }) => {
    const db = createDb(databaseUrl(), 4);
    onCleanup(() => db.$client.end());
    return db;
  })
  .extend('ownDb', { scope: 'file' }, async ({}, { onCleanup }): Promise<{ url: string; db: Db }> => {
    const shared = databaseUrl();
    const name = `hl_file_${randomUUID().replace(/-/g, '').slice(0, 12)}`;
    const url = await createDatabaseFromTemplate(shared, name);
    const db = createDb(url, 4);
    onCleanup(async () => {
      await db.$client.end();
      await dropDatabase(shared, name);
    });
    return { url, db };
  })
  .extend('signedIn', { scope: 'file' }, async (): Promise<SignedIn> => {
    const clients = new Map<DemoRole, Promise<AppClient>>();
    return (role, o = {}) => {
      if (o.fresh) return signIn(DEMO[role], DEMO_PASSWORD);
      let c = clients.get(role);
      if (!c) {
        c = signIn(DEMO[role], DEMO_PASSWORD);
        clients.set(role, c);
        // a failed sign-in is not kept: the next call tries again
        c.catch(() => clients.delete(role));
      }
      return c;
    };
  })
  .extend('browser', { scope: 'worker' }, async ({}, { onCleanup }): Promise<Browser> => {
    const browser = await launch();
    onCleanup(() => browser.close());
    return browser;
  })
  .extend('newPage', async ({ browser }, { onCleanup }) => {
    const contexts: BrowserContext[] = [];
    onCleanup(async () => {
      await Promise.allSettled(contexts.map((c) => c.close()));
    });
    const newPage: NewPage = async (options = {}) => {
      const ctx = await browser.newContext(options);
      contexts.push(ctx);
      return ctx.newPage();
    };
    return newPage;
  })
  .extend('page', async ({ newPage }) => newPage());

export const it = test;
