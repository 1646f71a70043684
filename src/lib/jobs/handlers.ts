import type PgBoss from 'pg-boss';

/** Registers the worker's job handlers (filled in by the ingestion and linking modules). */
export async function registerHandlers(_boss: PgBoss) {}
