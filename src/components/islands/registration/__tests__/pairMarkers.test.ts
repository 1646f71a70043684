import { describe, it, expect } from 'vitest';
import type { Affine } from '../../../../lib/analysis/types';
import { initialPairEdit } from '../pairEditing';
import { pairMarkers, type PairMarkerInputs } from '../pairMarkers';

// invented field: AFM pixels 20 nm, fluorescence pixels 60 nm, flFromAfm = AFM/3 shifted by (10, 20) fluorescence px
const flFromAfm: Affine = [1 / 3, 0, 10, 0, 1 / 3, 20];
const inputs: PairMarkerInputs = {
  transform: flFromAfm,
  vesicles: [{ x: 300, y: 150, diameterNm: 120 }, { x: 30, y: 60, diameterNm: 30 }],
  flCandidates: [{ x: 40, y: 40 }],
  showMapped: true,
  afmPixelNm: 20,
  flPixelNm: 60,
};
const pairs = [{ afm: { x: 0, y: 0 }, fl: { x: 10, y: 20 } }, { afm: { x: 300, y: 0 }, fl: { x: 110, y: 20 } }];

describe('pairMarkers', () => {
  it('maps the detections through the transform at their size: vesicle outlines on the fluorescence frame, spots on the height map', () => {
    const m = pairMarkers(initialPairEdit(null), inputs);
    // (300, 150) → (110, 70), radius 60 nm / 60 nm = 1 px; (30, 60) → (20, 40), 15 nm / 60 nm = 0.25 px, raised to 0.6 px
    expect(m.fl).toEqual([
      { p: { x: 110, y: 70 }, r: 1, cls: 'hl-outline' },
      { p: { x: 20, y: 40 }, r: 0.6, cls: 'hl-outline' },
    ]);
    // the spot (40, 40) maps back to (3·30, 3·20) = (90, 60); 60 nm / 20 nm = 3 px
    expect(m.afm).toHaveLength(1);
    expect(m.afm[0].p.x).toBeCloseTo(90, 9);
    expect(m.afm[0].p.y).toBeCloseTo(60, 9);
    expect(m.afm[0]).toMatchObject({ r: 3, cls: 'hl-spot' });
    expect(pairMarkers(initialPairEdit(null), { ...inputs, showMapped: false })).toEqual({ afm: [], fl: [] });
    expect(pairMarkers(initialPairEdit(null), { ...inputs, transform: null })).toEqual({ afm: [], fl: [] });
  });

  it('numbers the pairs, marks the selected one, and draws proposals, the waiting point and a proposed partner', () => {
    const s = {
      ...initialPairEdit({ pairs, version: 1 }),
      selected: 1,
      proposals: [{ afm: { x: 600, y: 450 }, fl: { x: 210, y: 170 }, residualPx: 0.3 }],
      suggestion: { from: 'afm' as const, afm: { x: 90, y: 600 }, fl: { x: 40, y: 220 }, offsetPx: 0.5 },
      pending: { side: 'fl' as const, p: { x: 5, y: 6 } },
    };
    const m = pairMarkers(s, { ...inputs, showMapped: false });
    expect(m.afm).toEqual([
      { p: pairs[0].afm, r: 6, cls: 'hl-pair', label: '1' },
      { p: pairs[1].afm, r: 6, cls: 'hl-pair hl-selected', label: '2' },
      { p: { x: 600, y: 450 }, r: 6, cls: 'hl-proposal' },
      { p: { x: 90, y: 600 }, r: 6, cls: 'hl-pending' },
    ]);
    expect(m.fl).toEqual([
      { p: pairs[0].fl, r: 1.5, cls: 'hl-pair', label: '1' },
      { p: pairs[1].fl, r: 1.5, cls: 'hl-pair hl-selected', label: '2' },
      { p: { x: 210, y: 170 }, r: 1.5, cls: 'hl-proposal' },
      { p: { x: 5, y: 6 }, r: 1.5, cls: 'hl-pending' },
      // the proposed partner is larger than a pair's ring
      { p: { x: 40, y: 220 }, r: 3, cls: 'hl-suggested', label: '?' },
    ]);
  });

  it('a partner proposed from a fluorescence click lands on the height map', () => {
    const s = { ...initialPairEdit(null), suggestion: { from: 'fl' as const, afm: { x: 90, y: 600 }, fl: { x: 40, y: 220 }, offsetPx: 2 } };
    const m = pairMarkers(s, { ...inputs, showMapped: false });
    expect(m.fl).toEqual([{ p: { x: 40, y: 220 }, r: 1.5, cls: 'hl-pending' }]);
    expect(m.afm).toEqual([{ p: { x: 90, y: 600 }, r: 10, cls: 'hl-suggested', label: '?' }]);
  });
});
