/**
 * A local SMTP sink: accepts every message on 127.0.0.1 and keeps it as an .eml file,
 * so invitations and resets can be read on the admin page and by tests.
 */
import { SMTPServer } from 'smtp-server';
import { mkdirSync, createWriteStream, renameSync } from 'node:fs';
import { join } from 'node:path';
import { randomUUID } from 'node:crypto';

export async function startSmtpSink(opts: { port: number; directory: string }) {
  mkdirSync(opts.directory, { recursive: true });
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS'],
    size: 25 * 1024 * 1024,
    onData(stream, _session, callback) {
      const name = `${new Date().toISOString().replace(/[:.]/g, '-')}-${randomUUID().slice(0, 8)}.eml`;
      // Written under a .part name and renamed when whole, so a reader never parses half a message.
      const partial = join(opts.directory, `${name}.part`);
      const out = createWriteStream(partial);
      stream.pipe(out);
      out.on('finish', () => {
        try {
          renameSync(partial, join(opts.directory, name));
          callback();
        } catch (e) {
          callback(e as Error);
        }
      });
      out.on('error', (e) => callback(e));
    },
  });
  await new Promise<void>((res, rej) => {
    server.once('error', rej);
    server.listen(opts.port, '127.0.0.1', () => res());
  });
  return { stop: () => new Promise<void>((res) => server.close(() => res())) };
}
