/**
 * A local SMTP sink: accepts every message on 127.0.0.1 and keeps it as an .eml file,
 * so invitations and resets can be read on the admin page and by tests.
 */
import { SMTPServer } from 'smtp-server';
import { mkdirSync, createWriteStream } from 'node:fs';
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
      const out = createWriteStream(join(opts.directory, name));
      stream.pipe(out);
      out.on('finish', () => callback());
      out.on('error', (e) => callback(e));
    },
  });
  await new Promise<void>((res, rej) => {
    server.once('error', rej);
    server.listen(opts.port, '127.0.0.1', () => res());
  });
  return { stop: () => new Promise<void>((res) => server.close(() => res())) };
}
