/**
 * Throw-away databases for the test suite, on the test cluster: a template (migrated, with the demo people,
 * study, panel and samples of scripts/seed.ts) made once per `npm test`, and per-file copies of it made with
 * `CREATE DATABASE ... TEMPLATE` (PostgreSQL copies the files: well under a second for this size).
 * The app server and the suite's worker stay on the main database: see docs/architecture.md, "Tests".
 */
import pg from 'pg';
import { createDb } from '../../src/lib/db/client';
import { runMigrations } from '../../src/lib/db/migrate';
import { seed } from '../seed';

/** `url` with its database name replaced by `name`. */
export function databaseUrl(url: string, name: string): string {
  const u = new URL(url);
  u.pathname = `/${name}`;
  return u.toString();
}

/** The database name of `url`. */
export function databaseName(url: string): string {
  return decodeURIComponent(new URL(url).pathname.slice(1));
}

/** The template's name for a suite whose main database is `url`. */
export function templateName(url: string): string {
  return `${databaseName(url)}_template`;
}

const ident = (name: string) => {
  // names are made here, never from input; the check keeps a mistake from becoming SQL
  if (!/^[a-z0-9_]{1,63}$/.test(name)) throw new Error(`not a plain database name: ${name}`);
  return `"${name}"`;
};

/** Runs one statement on the cluster's maintenance database (CREATE/DROP DATABASE cannot run inside the target). */
async function onCluster(url: string, statement: string): Promise<void> {
  const c = new pg.Client({ connectionString: databaseUrl(url, 'postgres') });
  await c.connect();
  try {
    await c.query(statement);
  } finally {
    await c.end();
  }
}

/**
 * (Re)creates the template beside the main database of `url`: migrations, then the demo people and samples.
 * No connection stays open to it, so copies can be made from it.
 * @returns the template's name
 */
export async function createTemplateDatabase(url: string): Promise<string> {
  const name = templateName(url);
  await onCluster(url, `DROP DATABASE IF EXISTS ${ident(name)} WITH (FORCE)`);
  await onCluster(url, `CREATE DATABASE ${ident(name)}`);
  const db = createDb(databaseUrl(url, name), 2);
  try {
    await runMigrations(db);
    await seed(db);
  } finally {
    await db.$client.end();
  }
  return name;
}

/** Copies the template into a new database `name`; @returns its URL. */
export async function createDatabaseFromTemplate(url: string, name: string): Promise<string> {
  await onCluster(url, `CREATE DATABASE ${ident(name)} TEMPLATE ${ident(templateName(url))}`);
  return databaseUrl(url, name);
}

/** Drops database `name`, closing any connection still open to it. */
export async function dropDatabase(url: string, name: string): Promise<void> {
  await onCluster(url, `DROP DATABASE IF EXISTS ${ident(name)} WITH (FORCE)`);
}
