import { describe, expect } from 'vitest';
import { readdirSync, statSync } from 'node:fs';
import { join, relative } from 'node:path';
import { AppClient } from '../support/client';
import { DEMO, ROLES, type DemoRole } from '../support/demo';
import { test, it } from '../support/fixtures';
import { ROUTES, type RouteSpec } from '../support/routes';
import { samples, fields } from '../../src/lib/db/schema';

const clients = {} as Record<DemoRole, AppClient>;
let ids: Record<string, string> = {};

function listApiFiles(dir: string): string[] {
  return readdirSync(dir).flatMap((n) => {
    const p = join(dir, n);
    return statSync(p).isDirectory() ? listApiFiles(p) : [relative('src/pages/api', p)];
  });
}

/** Fills the placeholders; `outsider` uses the study no demo person belongs to. */
function fill(text: string, outsider: boolean): string {
  const p = outsider ? { study: ids.other, sample: ids.otherSample, field: ids.otherField } : { study: ids.study, sample: ids.sample, field: ids.field };
  return text.replaceAll(':study', p.study).replaceAll(':sample', p.sample).replaceAll(':field', p.field).replaceAll(':user', ids.user);
}

async function call(c: AppClient, r: RouteSpec, outsider = false) {
  const path = fill(r.path, outsider);
  return r.body === undefined ? c.fetch(path, { method: r.method }) : c.json(path, r.method, JSON.parse(fill(JSON.stringify(r.body), outsider)));
}

test.beforeAll(async ({ db, signedIn }) => {
  for (const role of ROLES) clients[role] = await signedIn(role);
  const studies = (await (await clients.biologist.fetch('/api/studies')).json()).studies;
  const other = await clients.admin.json('/api/studies', 'POST', { name: `Matrix other study ${Date.now()}` });
  const users = (await (await clients.admin.fetch('/api/admin/users')).json()).users;
  ids = { study: studies[0].id, other: (await other.json()).id, user: users.find((u: { email: string }) => u.email === DEMO.collaborator).id };
  // A sample and a field in each study, written straight to the database.
  for (const [key, studyId] of [['', ids.study], ['other', ids.other]] as const) {
    const [s] = await db.insert(samples).values({ studyId, code: `MATRIX-${Date.now()}-${key || 'own'}` }).returning();
    const [f] = await db.insert(fields).values({ sampleId: s.id, name: 'matrix probe', status: 'failed', failureReason: 'probe' }).returning();
    ids[key ? 'otherSample' : 'sample'] = s.id;
    ids[key ? 'otherField' : 'field'] = f.id;
  }
});

describe('authorization matrix', () => {
  it('lists every API route file', () => {
    const files = listApiFiles('src/pages/api').filter((f) => !f.startsWith('auth'));
    const covered = new Set(ROUTES.map((r) => r.file));
    expect(files.filter((f) => !covered.has(f))).toEqual([]);
  });

  for (const r of ROUTES) {
    describe(`${r.method} ${r.path}`, () => {
      if (r.allowed !== 'public') {
        it('anonymous gets 401 JSON', async () => {
          const res = await call(new AppClient(), r);
          expect(res.status).toBe(401);
          const body = await res.json();
          expect(body.error).toBe('unauthorized');
          expect(typeof body.message).toBe('string');
        });
      }
      for (const role of ROLES) {
        const allowed = r.allowed === 'public' || r.allowed.includes(role);
        it(`${role} ${allowed ? 'passes the guard' : 'gets 403'}`, async () => {
          const res = await call(clients[role], r);
          if (allowed) {
            expect([200, 201, 202, 204, 400, 404, 409, 422]).toContain(res.status);
          } else {
            expect(res.status).toBe(403);
            expect((await res.json()).error).toBe('forbidden');
          }
        });
        if (r.studyScoped && role !== 'admin') {
          it(`${role} who is not a member gets 403`, async () => {
            const res = await call(clients[role], r, true);
            expect(res.status).toBe(403);
          });
        }
      }
    });
  }

  it('pages redirect anonymous visitors to sign-in and keep where they were going', async () => {
    const res = await new AppClient().fetch(`/studies/${ids.study}`);
    expect(res.status).toBe(302);
    expect(res.headers.get('location')).toBe(`/signin?next=${encodeURIComponent(`/studies/${ids.study}`)}`);
  });

  it('a study page is forbidden to a non-member', async () => {
    expect((await clients.biologist.fetch(`/studies/${ids.other}`)).status).toBe(403);
    expect((await clients.biologist.fetch(`/studies/${ids.study}`)).status).toBe(200);
  });

  it('admin pages are forbidden to other roles', async () => {
    for (const role of ['biologist', 'analyst', 'collaborator'] as const) {
      expect((await clients[role].fetch('/admin/users')).status).toBe(403);
    }
    expect((await clients.admin.fetch('/admin/users')).status).toBe(200);
  });
});
