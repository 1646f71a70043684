import { describe, expect, it } from 'vitest';
import { readdir, readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { AUDIT_ACTIONS, isAuditAction } from '../../src/lib/audit';

/** Every .ts/.astro source that may write audit entries: the app (minus the list itself) and the Auth.js config. */
async function writerSources(): Promise<string> {
  const files: string[] = ['auth.config.ts'];
  for (const e of await readdir('src', { recursive: true, withFileTypes: true })) {
    if (!e.isFile() || !/\.(ts|tsx|astro)$/.test(e.name) || e.parentPath.includes('__tests__')) continue;
    const p = join(e.parentPath, e.name);
    if (p !== join('src', 'lib', 'audit.ts') && p !== join('src', 'pages', 'admin', 'audit.astro')) files.push(p);
  }
  return (await Promise.all(files.map((f) => readFile(f, 'utf8')))).join('\n');
}

describe('AUDIT_ACTIONS', () => {
  it('names only actions that some writer records (the filter offers nothing that never appears)', async () => {
    const text = await writerSources();
    const unwritten = AUDIT_ACTIONS.filter((a) => !text.includes(`'${a}'`));
    expect(unwritten).toEqual([]);
    expect(new Set(AUDIT_ACTIONS).size).toBe(AUDIT_ACTIONS.length);
  });

  it('recognises listed actions and refuses others', () => {
    expect(isAuditAction('panel.changed')).toBe(true);
    expect(isAuditAction('field.upload_failed')).toBe(false);
    expect(isAuditAction('')).toBe(false);
  });
});
