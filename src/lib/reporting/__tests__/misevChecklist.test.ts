import { describe, it, expect } from 'vitest';
import { misevChecklist, type ChecklistInput } from '../misevChecklist';

// Items follow the proposed checklist in docs/references.md §8 (MISEV2018 PMC6322352, MISEV2023 PMC10850029,
// MIFlowCyt-EV PMC7034442). The inputs are invented studies.
const complete: ChecklistInput = {
  panel: [
    { channelIndex: 0, marker: 'CD9', antibodyClone: 'demo A', fluorophore: 'dye 1', excitationNm: 488, emissionNm: 520 },
    { channelIndex: 1, marker: 'Calnexin', antibodyClone: 'demo B', fluorophore: 'dye 2', excitationNm: 561, emissionNm: 590 },
  ],
  samples: [
    { code: 'S-1', controlKind: 'none', source: 'plasma', isolationMethod: 'SEC', substrate: 'mica', dilution: '1:10' },
    { code: 'S-ISO', controlKind: 'isotype', source: 'plasma', isolationMethod: 'SEC', substrate: 'mica', dilution: '1:10' },
    { code: 'S-BUF', controlKind: 'buffer_only', source: 'buffer', isolationMethod: 'SEC', substrate: 'mica', dilution: '1:1' },
  ],
  fields: {
    fields: 4, media: ['air'], scanModes: ['intermittent contact'], withAfmPixel: 4, withFlPixel: 4, withTipRadius: 4, withNa: 4, withExposure: 4,
    withEmission: 4, afmPixelMinNm: 3.9, afmPixelMaxNm: 3.9, flPixelMinNm: 65, flPixelMaxNm: 65,
  },
  linkSettings: [{ thresholdCountsByMarker: { CD9: 120 }, thresholdMethod: 'isotype mean + 3 SD' }],
  registrations: { registered: 4, minFiducials: 5, maxFreNm: 21.4, withTre: 4 },
  releasedSamples: 3,
};

const byId = (items: ReturnType<typeof misevChecklist>) => Object.fromEntries(items.map((i) => [i.id, i]));

describe('misevChecklist', () => {
  it('has the proposed items in order (antibodies split from item 7), each with a source', () => {
    const items = misevChecklist(complete);
    expect(items.map((i) => i.id)).toEqual([
      'source', 'separation', 'quantification', 'substrate', 'medium', 'afm', 'fluorescence', 'antibodies', 'controls',
      'thresholds', 'registration', 'software', 'markers', 'counts',
    ]);
    for (const i of items) expect(i.source.length).toBeGreaterThan(3);
    // a published source with its year, never a file of the repository or of anyone else
    for (const i of items) {
      expect(i.source).toMatch(/(19|20)\d\d/);
      expect(i.source).not.toMatch(/REFERENCES|references\.md|\.md\b|\/work\//);
    }
  });

  it('marks a fully recorded study as recorded where the tool can know, and names values', () => {
    const m = byId(misevChecklist(complete));
    for (const id of ['separation', 'substrate', 'medium', 'afm', 'fluorescence', 'antibodies', 'controls', 'thresholds', 'registration', 'markers', 'counts']) {
      expect([id, m[id].status]).toEqual([id, 'recorded']);
    }
    expect(m.quantification.status).toBe('outside');
    expect(m.source.status).toBe('partial'); // the starting amount is never a Heightlight field
    expect(m.registration.detail).toContain('21.4 nm');
    expect(m.afm.detail).toContain('3.90 nm/px');
    expect(m.markers.detail).toContain('CD9');
    expect(m.markers.detail).toContain('Calnexin');
  });

  it('shows what is missing: no controls, no thresholds rule, partial pixel sizes, no non-EV marker', () => {
    const m = byId(misevChecklist({
      ...complete,
      panel: [{ ...complete.panel[0], antibodyClone: '' }],
      samples: complete.samples.map((s) => ({ ...s, controlKind: 'none' })),
      fields: { ...complete.fields, withFlPixel: 3 },
      linkSettings: [{ thresholdCountsByMarker: { CD9: 120 } }],
      registrations: { registered: 2, minFiducials: 3, maxFreNm: 40, withTre: 0 },
      releasedSamples: 1,
    }));
    expect(m.controls.status).toBe('missing');
    expect(m.controls.detail).toContain('Isotype/secondary-only: missing');
    expect(m.thresholds.status).toBe('missing');
    expect(m.fluorescence.status).toBe('partial');
    expect(m.fluorescence.detail).toContain('3 of 4');
    expect(m.antibodies.status).toBe('missing');
    expect(m.registration.status).toBe('partial');
    expect(m.markers.status).toBe('partial');
    expect(m.counts.status).toBe('partial');
  });

  it('an empty study is missing everything it could record', () => {
    const m = byId(misevChecklist({
      panel: [], samples: [], linkSettings: [], releasedSamples: 0,
      fields: { fields: 0, media: [], scanModes: [], withAfmPixel: 0, withFlPixel: 0, withTipRadius: 0, withNa: 0, withExposure: 0, withEmission: 0, afmPixelMinNm: null, afmPixelMaxNm: null, flPixelMinNm: null, flPixelMaxNm: null },
      registrations: { registered: 0, minFiducials: null, maxFreNm: null, withTre: 0 },
    }));
    for (const id of ['separation', 'substrate', 'medium', 'afm', 'fluorescence', 'antibodies', 'controls', 'thresholds', 'registration', 'software', 'markers', 'counts']) {
      expect([id, m[id].status]).toEqual([id, 'missing']);
    }
  });
});
