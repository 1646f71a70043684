import { describe, it, expect } from 'vitest';
import type { Affine } from '../../../../lib/analysis/types';
import {
  HISTORY_LIMIT, initialPairEdit, pairEditReducer, type Pair, type PairEditAction, type PairEditState, type PickContext,
} from '../pairEditing';

// An invented field: AFM pixels 3× finer than fluorescence pixels, the frames shifted by (10, 20) fluorescence px.
// flFromAfm = [a, b, c, d, e, f] with x' = a·x + b·y + c, y' = d·x + e·y + f (src/lib/analysis/geometry/applyAffine.ts).
const flFromAfm: Affine = [1 / 3, 0, 10, 0, 1 / 3, 20];
const afmCandidates = [{ x: 300, y: 150 }, { x: 600, y: 450 }, { x: 90, y: 600 }];
// spots near the images of the first two candidates: (110, 70) and (210, 170), off by (0.8, 0.6) and (−0.6, 0.8) px
const flCandidates = [{ x: 110.8, y: 70.6 }, { x: 209.4, y: 170.8 }, { x: 40, y: 40 }];
const noTransform: PickContext = { transform: null, afmCandidates, flCandidates };
const withTransform: PickContext = { transform: flFromAfm, afmCandidates, flCandidates };

const run = (s: PairEditState, ...actions: PairEditAction[]) => actions.reduce(pairEditReducer, s);
const pick = (side: 'afm' | 'fl', x: number, y: number, context = noTransform): PairEditAction => ({ type: 'pick', side, point: { x, y }, context });
const threePairs: Pair[] = [
  { afm: { x: 0, y: 0 }, fl: { x: 10, y: 20 } },
  { afm: { x: 300, y: 0 }, fl: { x: 110, y: 20 } },
  { afm: { x: 0, y: 300 }, fl: { x: 10, y: 120 } },
];
const start = () => initialPairEdit({ pairs: threePairs, version: 2 });

describe('initialPairEdit', () => {
  it('opens on the saved version, or empty at version 0', () => {
    expect(initialPairEdit(null)).toEqual({ pairs: [], history: [], pending: null, suggestion: null, selected: null, proposals: [], baseVersion: 0 });
    const s = start();
    expect(s.pairs).toBe(threePairs);
    expect(s.baseVersion).toBe(2);
  });
});

describe('placing a pair by hand', () => {
  it('snaps each click to the nearest detected feature within 6 px and completes the pair on the other image', () => {
    // (303, 154) is 5 px from the bead at (300, 150): snapped; the fluorescence click 0.5 px from a spot: snapped
    const afterAfm = run(initialPairEdit(null), pick('afm', 303, 154));
    expect(afterAfm.pending).toEqual({ side: 'afm', p: { x: 300, y: 150 } });
    expect(afterAfm.pairs).toEqual([]);
    const done = pairEditReducer(afterAfm, pick('fl', 110.5, 70.2));
    expect(done.pairs).toEqual([{ afm: { x: 300, y: 150 }, fl: { x: 110.8, y: 70.6 } }]);
    expect(done.pending).toBeNull();
    expect(done.history).toEqual([[]]);
  });

  it('keeps a click farther than 6 px from every feature where it was', () => {
    // (307, 150) is 7 px from (300, 150)
    const s = run(initialPairEdit(null), pick('afm', 307, 150));
    expect(s.pending).toEqual({ side: 'afm', p: { x: 307, y: 150 } });
  });

  it('starts from either image: fluorescence first, then the height map', () => {
    const s = run(initialPairEdit(null), pick('fl', 40, 41), pick('afm', 90, 598));
    expect(s.pairs).toEqual([{ afm: { x: 90, y: 600 }, fl: { x: 40, y: 40 } }]);
  });

  it('a second click on the same image replaces the waiting point instead of pairing', () => {
    const s = run(initialPairEdit(null), pick('afm', 300, 150), pick('afm', 600, 450));
    expect(s.pending).toEqual({ side: 'afm', p: { x: 600, y: 450 } });
    expect(s.pairs).toEqual([]);
    expect(s.history).toEqual([]);
  });
});

describe('proposed partners once a transform exists', () => {
  it('an AFM click proposes the spot nearest to where the transform puts it, with its offset', () => {
    // (300, 150) maps to (300/3 + 10, 150/3 + 20) = (110, 70); the spot (110.8, 70.6) is √(0.8² + 0.6²) = 1 px away
    const s = run(start(), pick('afm', 300, 150, withTransform));
    expect(s.suggestion).toEqual({ from: 'afm', afm: { x: 300, y: 150 }, fl: { x: 110.8, y: 70.6 }, offsetPx: expect.closeTo(1, 12) });
    expect(s.pending).toBeNull();
    expect(s.pairs).toBe(threePairs); // not a pair until accepted
  });

  it('a fluorescence click proposes the AFM feature nearest to its back-mapped position', () => {
    // (209.4, 170.8) maps back to (3·199.4, 3·150.8) = (598.2, 452.4), √(1.8² + 2.4²) = 3 px from the bead at (600, 450)
    const s = run(start(), pick('fl', 209.4, 170.8, withTransform));
    expect(s.suggestion).toMatchObject({ from: 'fl', afm: { x: 600, y: 450 }, fl: { x: 209.4, y: 170.8 } });
    expect(s.suggestion!.offsetPx).toBeCloseTo(3, 9);
  });

  it('proposes nothing when no spot lies within 3 px of the prediction: the click waits for a hand-placed partner', () => {
    // the bead at (90, 600) maps to (40, 220): the nearest spot (40, 40) is 180 px away
    const s = run(start(), pick('afm', 90, 600, withTransform));
    expect(s.suggestion).toBeNull();
    expect(s.pending).toEqual({ side: 'afm', p: { x: 90, y: 600 } });
  });

  it('accepting adds the pair (undoable); dismissing or Esc adds nothing', () => {
    const proposed = run(start(), pick('afm', 300, 150, withTransform));
    const accepted = pairEditReducer(proposed, { type: 'acceptSuggestion' });
    expect(accepted.pairs).toEqual([...threePairs, { afm: { x: 300, y: 150 }, fl: { x: 110.8, y: 70.6 } }]);
    expect(accepted.suggestion).toBeNull();
    expect(pairEditReducer(accepted, { type: 'undo' }).pairs).toBe(threePairs);
    for (const a of [{ type: 'dismissSuggestion' }, { type: 'cancel' }] as const) {
      const s = pairEditReducer(proposed, a);
      expect(s.suggestion).toBeNull();
      expect(s.pairs).toBe(threePairs);
    }
    // accepting with nothing proposed changes nothing
    expect(pairEditReducer(start(), { type: 'acceptSuggestion' })).toEqual(start());
  });

  it('a click on the other image places the partner by hand instead of the proposed one', () => {
    const s = run(start(), pick('afm', 300, 150, withTransform), pick('fl', 40, 40, withTransform));
    expect(s.pairs[3]).toEqual({ afm: { x: 300, y: 150 }, fl: { x: 40, y: 40 } });
    expect(s.suggestion).toBeNull();
    expect(s.pending).toBeNull();
  });

  it('a new click on the same image replaces the proposal', () => {
    const s = run(start(), pick('afm', 300, 150, withTransform), pick('afm', 600, 450, withTransform));
    // (600, 450) maps to (210, 170); the spot (209.4, 170.8) is √(0.6² + 0.8²) = 1 px away
    expect(s.suggestion).toMatchObject({ afm: { x: 600, y: 450 }, fl: { x: 209.4, y: 170.8 } });
    expect(s.suggestion!.offsetPx).toBeCloseTo(1, 12);
    expect(s.pairs).toBe(threePairs);
  });
});

describe('selecting, moving and deleting', () => {
  it('with a row selected, a click moves that side of its pair and keeps the selection', () => {
    const s = run(start(), { type: 'toggleSelect', index: 1 }, pick('fl', 40.5, 39.5, withTransform));
    expect(s.pairs[1]).toEqual({ afm: { x: 300, y: 0 }, fl: { x: 40, y: 40 } });
    expect(s.pairs[0]).toBe(threePairs[0]);
    expect(s.selected).toBe(1);
    expect(s.suggestion).toBeNull();
    expect(pairEditReducer(s, { type: 'undo' }).pairs).toBe(threePairs);
  });

  it('a second click on the selected row clears the selection; selecting drops a proposed partner', () => {
    const proposed = run(start(), pick('afm', 300, 150, withTransform));
    const selected = pairEditReducer(proposed, { type: 'toggleSelect', index: 0 });
    expect(selected.selected).toBe(0);
    expect(selected.suggestion).toBeNull();
    expect(pairEditReducer(selected, { type: 'toggleSelect', index: 0 }).selected).toBeNull();
    expect(pairEditReducer(selected, { type: 'toggleSelect', index: 2 }).selected).toBe(2);
  });

  it('deletes a pair (undoable) and clears the selection; an index out of range changes nothing', () => {
    const s = run(start(), { type: 'toggleSelect', index: 1 }, { type: 'delete', index: 1 });
    expect(s.pairs).toEqual([threePairs[0], threePairs[2]]);
    expect(s.selected).toBeNull();
    expect(pairEditReducer(s, { type: 'undo' }).pairs).toBe(threePairs);
    const same = start();
    expect(pairEditReducer(same, { type: 'delete', index: 3 })).toBe(same);
  });

  it('Esc clears the waiting point, the proposal and the selection but keeps the pairs', () => {
    const s = run(start(), { type: 'toggleSelect', index: 1 }, { type: 'cancel' }, pick('afm', 300, 150), { type: 'cancel' });
    expect(s).toMatchObject({ pending: null, suggestion: null, selected: null, pairs: threePairs });
  });
});

describe('undo', () => {
  it('steps back one change at a time, and does nothing to the pairs once the history is empty', () => {
    const s = run(initialPairEdit(null), pick('afm', 300, 150), pick('fl', 110, 70), pick('afm', 600, 450), pick('fl', 209, 171));
    expect(s.pairs).toHaveLength(2);
    const one = pairEditReducer(s, { type: 'undo' });
    expect(one.pairs).toEqual([{ afm: { x: 300, y: 150 }, fl: { x: 110.8, y: 70.6 } }]);
    const none = pairEditReducer(one, { type: 'undo' });
    expect(none.pairs).toEqual([]);
    expect(pairEditReducer(none, { type: 'undo' })).toBe(none);
  });

  it('drops a selection that no longer points at a pair', () => {
    const s = run(initialPairEdit(null), pick('afm', 300, 150), pick('fl', 110, 70), { type: 'toggleSelect', index: 0 }, { type: 'undo' });
    expect(s.pairs).toEqual([]);
    expect(s.selected).toBeNull();
  });

  it(`keeps the last ${HISTORY_LIMIT} states`, () => {
    let s = initialPairEdit(null);
    for (let i = 0; i < HISTORY_LIMIT + 20; i++) s = run(s, pick('afm', 1000 + i, 0), pick('fl', 1000 + i, 0));
    expect(s.pairs).toHaveLength(HISTORY_LIMIT + 20);
    expect(s.history).toHaveLength(HISTORY_LIMIT);
    // the oldest state kept has 20 pairs: the first 20 changes fell off
    expect(s.history[0]).toHaveLength(20);
  });
});

describe('automatic proposals', () => {
  const found = [
    { afm: { x: 600, y: 450 }, fl: { x: 209.4, y: 170.8 }, residualPx: 0.4 },
    { afm: { x: 90, y: 600 }, fl: { x: 40, y: 220 }, residualPx: 0.2 },
  ];
  it('accepts one (undoable), drops one, or accepts all', () => {
    const s = run(start(), { type: 'proposalsFound', pairs: found });
    const one = pairEditReducer(s, { type: 'acceptProposal', index: 1 });
    expect(one.pairs).toEqual([...threePairs, { afm: { x: 90, y: 600 }, fl: { x: 40, y: 220 } }]);
    expect(one.proposals).toEqual([found[0]]);
    expect(pairEditReducer(one, { type: 'undo' }).pairs).toBe(threePairs);
    const dropped = pairEditReducer(s, { type: 'dropProposal', index: 0 });
    expect(dropped.proposals).toEqual([found[1]]);
    expect(dropped.pairs).toBe(threePairs);
    const all = pairEditReducer(s, { type: 'acceptAllProposals' });
    expect(all.pairs).toEqual([...threePairs, { afm: found[0].afm, fl: found[0].fl }, { afm: found[1].afm, fl: found[1].fl }]);
    expect(all.proposals).toEqual([]);
    expect(all.history).toEqual([threePairs]);
  });
});

describe('saving', () => {
  it('builds later saves on the stored version and keeps every pair on screen', () => {
    const s = run(start(), { type: 'saved', version: 3 });
    expect(s.baseVersion).toBe(3);
    expect(s.pairs).toBe(threePairs);
  });

  it('does not change the state it is given', () => {
    const s = start();
    const copy = structuredClone(s);
    run(s, pick('afm', 300, 150, withTransform), { type: 'acceptSuggestion' }, { type: 'delete', index: 0 }, { type: 'undo' });
    expect(s).toEqual(copy);
  });
});
