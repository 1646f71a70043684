import { readSink } from '../../src/lib/mail/sinkReader';

/** Waits for a message to `to` in the test SMTP sink and returns it. */
export async function waitForMail(to: string, subjectIncludes: string, timeoutMs = 10_000) {
  const dir = process.env.MAIL_SINK_DIR;
  if (!dir) throw new Error('MAIL_SINK_DIR is not set: run through npm test');
  const until = Date.now() + timeoutMs;
  while (Date.now() < until) {
    const found = (await readSink(dir, 500)).find((m) => m.to.includes(to) && m.subject.includes(subjectIncludes));
    if (found) return found;
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`no mail to ${to} about "${subjectIncludes}" within ${timeoutMs} ms`);
}

export const linkIn = (text: string) => {
  const m = text.match(/https?:\/\/\S+\/invite\/([A-Za-z0-9_-]+)/);
  if (!m) throw new Error('no one-time link in the message');
  return { url: m[0], token: m[1] };
};
