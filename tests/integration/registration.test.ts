import { describe, expect } from 'vitest';
import type { AppClient } from '../support/client';
import { demoField } from '../support/demoField';
import { test, it } from '../support/fixtures';

let analyst: AppClient;
let admin: AppClient;
let biologist: AppClient;
let fieldId: string;

const square = [
  { afm: { x: 100, y: 100 }, fl: { x: 40, y: 40 } },
  { afm: { x: 600, y: 100 }, fl: { x: 120, y: 40 } },
  { afm: { x: 600, y: 600 }, fl: { x: 120, y: 120 } },
  { afm: { x: 100, y: 600 }, fl: { x: 40.5, y: 120 } },
];

test.beforeAll(async ({ db, signedIn }) => {
  analyst = await signedIn('analyst');
  admin = await signedIn('admin');
  biologist = await signedIn('biologist');
  // a demo field the browser test does not use
  fieldId = await demoField(db, 'HCP-003');
});

describe('saving registrations', () => {
  it('keeps every version, and a save from a stale version gets 409 without writing', async () => {
    const list0 = (await (await analyst.fetch(`/api/fields/${fieldId}/registration`)).json()).versions;
    const base = list0[0]?.version ?? 0;
    const a = await analyst.json(`/api/fields/${fieldId}/registration`, 'POST', { basedOnVersion: base, model: 'affine', pairs: square });
    expect(a.status).toBe(201);
    const saved = await a.json();
    expect(saved.version).toBe(base + 1);
    // 4 pairs, one coordinate off by 0.5 px: FRE is a fraction of a fluorescence pixel (65 nm) and positive
    expect(saved.freNm).toBeGreaterThan(0);
    expect(saved.freNm).toBeLessThan(65);

    const stale = await admin.json(`/api/fields/${fieldId}/registration`, 'POST', { basedOnVersion: base, model: 'affine', pairs: square.slice(0, 3) });
    expect(stale.status).toBe(409);
    const body = await stale.json();
    expect(body.error).toBe('stale_version');
    expect(body.message).toMatch(/reload/);
    const list = (await (await biologist.fetch(`/api/fields/${fieldId}/registration`)).json()).versions;
    expect(list[0].version).toBe(base + 1);
    expect(list[0].pairs).toEqual(square);
    expect(list[0].createdByName).toBe('Ines Varga');
  });

  it('two saves from the same version at once: exactly one wins', async () => {
    const base = (await (await analyst.fetch(`/api/fields/${fieldId}/registration`)).json()).versions[0].version;
    const [r1, r2] = await Promise.all([
      analyst.json(`/api/fields/${fieldId}/registration`, 'POST', { basedOnVersion: base, pairs: square }),
      admin.json(`/api/fields/${fieldId}/registration`, 'POST', { basedOnVersion: base, pairs: square }),
    ]);
    expect([r1.status, r2.status].sort()).toEqual([201, 409]);
  });

  it('refuses collinear and duplicate pairs with a clear message', async () => {
    const base = (await (await analyst.fetch(`/api/fields/${fieldId}/registration`)).json()).versions[0].version;
    const line = [0, 1, 2, 3].map((i) => ({ afm: { x: 100 * i, y: 50 * i }, fl: { x: 20 * i, y: 10 * i } }));
    const r = await analyst.json(`/api/fields/${fieldId}/registration`, 'POST', { basedOnVersion: base, pairs: line });
    expect(r.status).toBe(422);
    expect((await r.json()).error).toBe('degenerate_fiducials');
    const dup = [square[0], square[0], square[1], square[2]];
    const d = await analyst.json(`/api/fields/${fieldId}/registration`, 'POST', { basedOnVersion: base, pairs: dup });
    expect(d.status).toBe(422);
    expect((await d.json()).error).toBe('duplicate_fiducials');
    const few = await analyst.json(`/api/fields/${fieldId}/registration`, 'POST', { basedOnVersion: base, pairs: square.slice(0, 2) });
    expect(few.status).toBe(400);
  });

  it('a biologist can look but not save', async () => {
    const r = await biologist.json(`/api/fields/${fieldId}/registration`, 'POST', { basedOnVersion: 0, pairs: square });
    expect(r.status).toBe(403);
  });

  it('proposes pairs automatically on the demo field', async () => {
    const r = await analyst.json(`/api/fields/${fieldId}/registration/auto`, 'POST', {});
    expect(r.status).toBe(200);
    const body = await r.json();
    // six beads and ~120 vesicles, some labelled: many consistent pairs, sub-pixel residuals
    expect(body.nbInliers).toBeGreaterThanOrEqual(10);
    expect(body.rmsResidualPx).toBeLessThan(1);
  });

  it('find pairs fits the model asked for: a similarity has equal axis scales and no shear', async () => {
    const affine = await (await analyst.json(`/api/fields/${fieldId}/registration/auto`, 'POST', { model: 'affine' })).json();
    expect(affine.model).toBe('affine');
    const r = await analyst.json(`/api/fields/${fieldId}/registration/auto`, 'POST', { model: 'similarity' });
    expect(r.status).toBe(200);
    const body = await r.json();
    expect(body.model).toBe('similarity');
    expect(body.nbInliers).toBeGreaterThanOrEqual(10);
    // the demo scene's map is a mirrored rotation + scale (fixtures/demoScene.ts), so the constrained model fits as well
    expect(body.rmsResidualPx).toBeLessThan(1);
    // mirrored similarity k·R(θ)·diag(1, −1): a = −e and b = d exactly (Umeyama, IEEE TPAMI 13(4), 1991)
    const [a, b, , d, e] = body.flFromAfm;
    expect(Math.abs(a + e)).toBeLessThan(1e-12);
    expect(Math.abs(b - d)).toBeLessThan(1e-12);
    // while the free affine's two columns differ by noise
    const [fa, fb, , fd, fe] = affine.flFromAfm;
    expect(Math.abs(fa + fe) + Math.abs(fb - fd)).toBeGreaterThan(1e-9);
  });
});
