import { describe, expect } from 'vitest';
import type { AppClient } from '../support/client';
import { DEMO } from '../support/demo';
import { looksIdentifying } from '../../src/lib/reporting/looksIdentifying';
import { test, it } from '../support/fixtures';

let admin: AppClient;
let bio: AppClient;

test.beforeAll(async ({ signedIn }) => {
  admin = await signedIn('admin');
  bio = await signedIn('biologist');
});

describe('setting up a study', () => {
  it('admin creates a study and adds a biologist, who records the panel and a sample', async () => {
    const created = await admin.json('/api/studies', 'POST', { name: `Setup study ${Date.now()}`, description: 'invented' });
    expect(created.status).toBe(201);
    const { id } = await created.json();
    expect((await bio.fetch(`/api/studies/${id}`)).status).toBe(403);
    const people = (await (await admin.fetch('/api/admin/users')).json()).users;
    const bioId = people.find((p: { email: string }) => p.email === DEMO.biologist).id;
    expect((await admin.json(`/api/studies/${id}/members`, 'PUT', { userId: bioId, role: 'biologist' })).status).toBe(204);
    expect((await bio.fetch(`/api/studies/${id}`)).status).toBe(200);

    const panel = await bio.json(`/api/studies/${id}/panel`, 'PUT', { channels: [
      { marker: 'CD9', antibodyClone: 'c1', fluorophore: 'dye A', excitationNm: 488, emissionNm: 520 },
      { marker: 'EpCAM', emissionNm: 670 },
    ] });
    expect(panel.status).toBe(200);
    expect((await panel.json()).channels.map((c: { marker: string; channelIndex: number }) => [c.channelIndex, c.marker])).toEqual([[0, 'CD9'], [1, 'EpCAM']]);
    const dup = await bio.json(`/api/studies/${id}/panel`, 'PUT', { channels: [{ marker: 'CD9' }, { marker: 'cd9' }] });
    expect(dup.status).toBe(400);

    const sample = await bio.json(`/api/studies/${id}/samples`, 'POST', { code: 'SET-001', groupLabel: 'patient', controlKind: 'isotype' });
    expect(sample.status).toBe(201);
    expect((await sample.json()).warnings).toEqual([]);
    const again = await bio.json(`/api/studies/${id}/samples`, 'POST', { code: 'SET-001' });
    expect(again.status).toBe(409);
    const spaces = await bio.json(`/api/studies/${id}/samples`, 'POST', { code: 'Jane Doe' });
    expect(spaces.status).toBe(400);
    // codes that look like a name or a date of birth: recorded, with the sample form's warnings in the reply
    const named = await bio.json(`/api/studies/${id}/samples`, 'POST', { code: 'Doe_Jane' });
    expect(named.status).toBe(201);
    const namedBody = await named.json();
    expect(namedBody.id).toMatch(/^[0-9a-f-]{36}$/);
    expect(namedBody.warnings).toEqual([looksIdentifying('Doe_Jane').reasons[0].message]);
    expect(namedBody.warnings[0]).toMatch(/looks like a person's name/);
    const dated = await bio.json(`/api/studies/${id}/samples`, 'POST', { code: 'P-1980-03-12' });
    expect(dated.status).toBe(201);
    const datedWarnings: string[] = (await dated.json()).warnings;
    expect(datedWarnings).toHaveLength(1);
    expect(datedWarnings[0]).toMatch(/looks like a date/);
    const list = (await (await bio.fetch(`/api/studies/${id}/samples`)).json()).samples;
    expect(list.map((s: { code: string; controlKind: string }) => [s.code, s.controlKind])).toEqual([['Doe_Jane', 'none'], ['P-1980-03-12', 'none'], ['SET-001', 'isotype']]);

    expect((await admin.json(`/api/studies/${id}/members`, 'PUT', { userId: bioId, role: null })).status).toBe(204);
    expect((await bio.fetch(`/api/studies/${id}`)).status).toBe(403);
  });
});
