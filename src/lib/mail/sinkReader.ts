/** Reads the local SMTP sink's folder (development only) for the admin outbox page and tests. */
import { readdir, readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { simpleParser } from 'mailparser';

export interface SinkMessage { id: string; receivedAt: string; to: string; subject: string; text: string }

export async function readSink(dir: string, limit = 50): Promise<SinkMessage[]> {
  let names: string[];
  try {
    names = (await readdir(dir)).filter((n) => n.endsWith('.eml')).sort().reverse().slice(0, limit);
  } catch {
    return [];
  }
  return Promise.all(
    names.map(async (name) => {
      const parsed = await simpleParser(await readFile(join(dir, name)));
      const to = Array.isArray(parsed.to) ? parsed.to.map((a) => a.text).join(', ') : parsed.to?.text ?? '';
      return { id: name.replace(/\.eml$/, ''), receivedAt: (parsed.date ?? new Date(0)).toISOString(), to, subject: parsed.subject ?? '', text: parsed.text ?? '' };
    }),
  );
}
