/** Brings up the embedded services (PostgreSQL, s3rver, SMTP sink) and applies migrations. */
import { join } from 'node:path';
import { startPostgres } from './postgres';
import { startS3 } from './s3';
import { startSmtpSink } from './smtp-sink';
import { createDb } from '../../src/lib/db/client';
import { runMigrations } from '../../src/lib/db/migrate';
import type { Embedded } from './env';

export async function startServices(s: Embedded, log: (m: string) => void) {
  const pg = startPostgres({ dataDir: join(s.dataDir, 'postgres'), port: s.pgPort, user: 'heightlight', password: 'heightlight', database: 'heightlight', log });
  const s3 = await startS3({
    port: s.s3Port, directory: join(s.dataDir, 's3'), bucket: s.env.S3_BUCKET, appOrigin: s.env.PUBLIC_URL,
    credentials: { accessKeyId: s.env.S3_ACCESS_KEY_ID, secretAccessKey: s.env.S3_SECRET_ACCESS_KEY, region: s.env.S3_REGION ?? 'us-east-1' },
  });
  const smtp = await startSmtpSink({ port: s.smtpPort, directory: s.env.MAIL_SINK_DIR });
  log(`PostgreSQL 127.0.0.1:${s.pgPort} · S3 fake ${s.env.S3_ENDPOINT} · SMTP sink 127.0.0.1:${s.smtpPort}`);
  const db = createDb(s.env.DATABASE_URL, 2);
  await runMigrations(db);
  await db.$client.end();
  log('database migrations applied');
  return {
    async stop() {
      await Promise.allSettled([s3.stop(), smtp.stop()]);
      pg.stop();
    },
  };
}
