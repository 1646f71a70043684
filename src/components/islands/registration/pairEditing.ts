import { applyAffine, invertAffine, proposePartner, snapToNearest } from '../../../lib/analysis/geometry';
import type { Affine, Point } from '../../../lib/analysis/types';

/**
 * The fiducial pair editing of the registration workspace as a pure reducer: which pairs exist, what the
 * analyst has half-placed, the partner proposed through the current transform, the selected row, the
 * automatic proposals under review, and the undo history. The island keeps it in `useReducer`; the
 * viewers, fetches and keys only dispatch actions.
 */

/** Which image a point lies on: the AFM height map or the fluorescence frame. */
export type Side = 'afm' | 'fl';
/** A fiducial pair: the same feature in AFM pixels and in fluorescence pixels. */
export interface Pair { afm: Point; fl: Point }
/** A partner proposed through the current transform for a point the analyst clicked; not a pair until accepted. */
export interface Suggestion extends Pair {
  /** The image the analyst clicked; the other side is the proposed partner. */
  from: Side;
  /** Distance between the partner and where the transform puts the clicked point (pixels of the partner's image). */
  offsetPx: number;
}
/** A pair proposed by the automatic pairing, under review until accepted or dropped. */
export interface ProposedPair extends Pair { residualPx: number }

export interface PairEditState {
  pairs: Pair[];
  /** Earlier `pairs`, newest last (at most {@link HISTORY_LIMIT}). */
  history: Pair[][];
  /** A point placed by hand whose partner on the other image is still to be clicked. */
  pending: { side: Side; p: Point } | null;
  suggestion: Suggestion | null;
  /** Row index whose next click moves that side of the pair. */
  selected: number | null;
  proposals: ProposedPair[];
  /** The saved version these edits start from (0 when none): a save from a stale base is refused by the server. */
  baseVersion: number;
}

/** What a click needs to know besides the point: the transform solved so far and the detected features to snap to. */
export interface PickContext {
  /** Current `flFromAfm` (AFM px → fluorescence px), or null while fewer than 3 pairs solve it. */
  transform: Affine | null;
  /** Detected beads and vesicles (AFM pixels). */
  afmCandidates: readonly Point[];
  /** Detected spots (fluorescence pixels). */
  flCandidates: readonly Point[];
}

export type PairEditAction =
  /** A click on one image, in that image's pixels (unsnapped). */
  | { type: 'pick'; side: Side; point: Point; context: PickContext }
  | { type: 'acceptSuggestion' }
  /** Drops the proposed partner only (its Cancel button). */
  | { type: 'dismissSuggestion' }
  /** Esc: drops the half-placed point, the proposed partner and the selection. */
  | { type: 'cancel' }
  /** A click on a row: selects it, or clears the selection when it was selected. */
  | { type: 'toggleSelect'; index: number }
  | { type: 'delete'; index: number }
  | { type: 'undo' }
  | { type: 'proposalsFound'; pairs: ProposedPair[] }
  | { type: 'acceptProposal'; index: number }
  | { type: 'dropProposal'; index: number }
  | { type: 'acceptAllProposals' }
  /** The server stored the pairs as this version: later saves build on it. */
  | { type: 'saved'; version: number };

/** Snap radius of a click to a detected feature (pixels of the clicked image). */
export const SNAP_PX = 6;
/** Largest distance (fluorescence px) between where the transform puts an AFM click and a spot proposed as its partner. */
export const PARTNER_MAX_PX = 3;
/** Undo steps kept. */
export const HISTORY_LIMIT = 100;

/** The editor's state for a workspace that opens on a saved version (or none). */
export function initialPairEdit(latest: { pairs: Pair[]; version: number } | null): PairEditState {
  return { pairs: latest?.pairs ?? [], history: [], pending: null, suggestion: null, selected: null, proposals: [], baseVersion: latest?.version ?? 0 };
}

/** Replaces the pairs, keeping the old ones for undo. */
function commit(s: PairEditState, pairs: Pair[]): PairEditState {
  return { ...s, pairs, history: [...s.history.slice(-(HISTORY_LIMIT - 1)), s.pairs] };
}

function pick(s: PairEditState, side: Side, raw: Point, { transform, afmCandidates, flCandidates }: PickContext): PairEditState {
  const p = snapToNearest(raw, side === 'afm' ? afmCandidates : flCandidates, SNAP_PX)?.point ?? raw;
  // a selected row: the click moves that side of its pair
  if (s.selected !== null) {
    const i = s.selected;
    return commit(s, s.pairs.map((q, j) => (j === i ? { ...q, [side]: p } : q)));
  }
  // a click in the other image completes the pair (placing the partner by hand instead of the proposed one)
  const start = s.suggestion ? { side: s.suggestion.from, p: s.suggestion[s.suggestion.from] } : s.pending;
  if (start && start.side !== side) {
    const pair = side === 'afm' ? { afm: p, fl: start.p } : { afm: start.p, fl: p };
    return { ...commit(s, [...s.pairs, pair]), pending: null, suggestion: null };
  }
  // once a transform exists, a click on one image proposes its partner on the other (snapped to a detected
  // feature); the analyst accepts it, clicks the partner by hand, or cancels
  if (transform && side === 'afm') {
    const prop = proposePartner(p, transform, flCandidates, { maxDistancePx: PARTNER_MAX_PX });
    if (prop.candidate) {
      return { ...s, pending: null, suggestion: { from: 'afm', afm: p, fl: prop.candidate.point, offsetPx: prop.candidate.distancePx } };
    }
  }
  if (transform && side === 'fl') {
    const hit = snapToNearest(applyAffine(invertAffine(transform), p), afmCandidates, SNAP_PX);
    if (hit) return { ...s, pending: null, suggestion: { from: 'fl', afm: hit.point, fl: p, offsetPx: hit.distancePx } };
  }
  // nothing to propose (or a second click on the same image): this point waits for its partner
  return { ...s, suggestion: null, pending: { side, p } };
}

/** The pair editor's reducer: pure, so every transition is unit-tested without a browser. */
export function pairEditReducer(s: PairEditState, a: PairEditAction): PairEditState {
  switch (a.type) {
    case 'pick':
      return pick(s, a.side, a.point, a.context);
    case 'acceptSuggestion':
      if (!s.suggestion) return s;
      return { ...commit(s, [...s.pairs, { afm: s.suggestion.afm, fl: s.suggestion.fl }]), suggestion: null };
    case 'dismissSuggestion':
      return s.suggestion ? { ...s, suggestion: null } : s;
    case 'cancel':
      return { ...s, pending: null, suggestion: null, selected: null };
    case 'toggleSelect':
      return { ...s, suggestion: null, selected: s.selected === a.index ? null : a.index };
    case 'delete':
      if (a.index < 0 || a.index >= s.pairs.length) return s;
      return { ...commit(s, s.pairs.filter((_, j) => j !== a.index)), selected: null };
    case 'undo': {
      // the suggestion goes too: it was proposed through the transform being undone
      if (!s.history.length) return s.suggestion ? { ...s, suggestion: null } : s;
      const pairs = s.history[s.history.length - 1];
      const selected = s.selected !== null && s.selected < pairs.length ? s.selected : null;
      return { ...s, pairs, history: s.history.slice(0, -1), suggestion: null, selected };
    }
    case 'proposalsFound':
      return { ...s, proposals: a.pairs };
    case 'acceptProposal': {
      const q = s.proposals[a.index];
      if (!q) return s;
      return { ...commit(s, [...s.pairs, { afm: q.afm, fl: q.fl }]), proposals: s.proposals.filter((_, j) => j !== a.index) };
    }
    case 'dropProposal':
      return { ...s, proposals: s.proposals.filter((_, j) => j !== a.index) };
    case 'acceptAllProposals':
      if (!s.proposals.length) return s;
      return { ...commit(s, [...s.pairs, ...s.proposals.map(({ afm, fl }) => ({ afm, fl }))]), proposals: [] };
    case 'saved':
      return { ...s, baseVersion: a.version };
  }
}
