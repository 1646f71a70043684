/** Finds a seeded demo field and waits until the worker has processed it. */
import { and, eq } from 'drizzle-orm';
import { createDb } from '../../src/lib/db/client';
import { fields, samples } from '../../src/lib/db/schema';

export async function demoField(code: string, name = 'grid A1', timeoutMs = 120_000) {
  const db = createDb(process.env.DATABASE_URL!, 1);
  try {
    const until = Date.now() + timeoutMs;
    while (Date.now() < until) {
      const [row] = await db.select({ id: fields.id, status: fields.status, failureReason: fields.failureReason }).from(fields)
        .innerJoin(samples, eq(samples.id, fields.sampleId)).where(and(eq(samples.code, code), eq(fields.name, name)));
      if (row && !['uploading', 'ingesting'].includes(row.status)) {
        if (row.status === 'failed') throw new Error(`demo field ${code} failed: ${row.failureReason}`);
        return row.id;
      }
      await new Promise((r) => setTimeout(r, 500));
    }
    throw new Error(`demo field ${code} was not processed within ${timeoutMs} ms`);
  } finally {
    await db.$client.end();
  }
}
