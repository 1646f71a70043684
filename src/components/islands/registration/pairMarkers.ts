import { applyAffine, invertAffine } from '../../../lib/analysis/geometry';
import type { Affine, Point } from '../../../lib/analysis/types';
import type { ImageMarker } from '../viewer/useImageMarkers';
import type { PairEditState } from './pairEditing';

/** Ring radius of a pair's marker (image pixels of each side). */
const PAIR_R = { afm: 6, fl: 1.5 } as const;
/** A proposed partner's ring is larger than a pair's, so it stands out. */
const SUGGESTED_R = { afm: 10, fl: 3 } as const;

export interface PairMarkerInputs {
  /** Current `flFromAfm`, or null while unsolved. */
  transform: Affine | null;
  /** Detected vesicles (AFM pixels, diameter in nm), or null before the detections load. */
  vesicles: readonly (Point & { diameterNm: number })[] | null;
  /** Detected spots (fluorescence pixels). */
  flCandidates: readonly Point[];
  /** Whether to draw the other image's detections through the transform. */
  showMapped: boolean;
  afmPixelNm: number;
  flPixelNm: number;
}

/**
 * The markers of both images of the registration workspace: the vesicle outlines and spots mapped through the
 * transform (the overlay), the pairs (numbered, the selected one highlighted), the automatic proposals under
 * review, the point waiting for its partner, and a proposed partner ("?").
 *
 * @returns the markers on the height map (`afm`) and on the fluorescence frame (`fl`), drawn in this order
 */
export function pairMarkers(
  s: Pick<PairEditState, 'pairs' | 'pending' | 'suggestion' | 'selected' | 'proposals'>,
  { transform, vesicles, flCandidates, showMapped, afmPixelNm, flPixelNm }: PairMarkerInputs,
): { afm: ImageMarker[]; fl: ImageMarker[] } {
  const afm: ImageMarker[] = [];
  const fl: ImageMarker[] = [];
  const on = { afm, fl };
  if (showMapped && transform && vesicles) {
    // vesicle outlines at their measured size on the fluorescence frame (at least 0.6 px to stay visible),
    // spots as 60 nm dots (at least 2 px) on the height map
    for (const v of vesicles) fl.push({ p: applyAffine(transform, v), r: Math.max(0.6, v.diameterNm / 2 / flPixelNm), cls: 'hl-outline' });
    const afmFromFl = invertAffine(transform);
    for (const q of flCandidates) afm.push({ p: applyAffine(afmFromFl, q), r: Math.max(2, 60 / afmPixelNm), cls: 'hl-spot' });
  }
  s.pairs.forEach((q, i) => {
    const cls = `hl-pair${s.selected === i ? ' hl-selected' : ''}`;
    afm.push({ p: q.afm, r: PAIR_R.afm, cls, label: String(i + 1) });
    fl.push({ p: q.fl, r: PAIR_R.fl, cls, label: String(i + 1) });
  });
  for (const q of s.proposals) {
    afm.push({ p: q.afm, r: PAIR_R.afm, cls: 'hl-proposal' });
    fl.push({ p: q.fl, r: PAIR_R.fl, cls: 'hl-proposal' });
  }
  if (s.pending) on[s.pending.side].push({ p: s.pending.p, r: PAIR_R[s.pending.side], cls: 'hl-pending' });
  if (s.suggestion) {
    // the clicked point as pending, its proposed partner with its own marker
    const from = s.suggestion.from;
    const to = from === 'afm' ? 'fl' : 'afm';
    on[from].push({ p: s.suggestion[from], r: PAIR_R[from], cls: 'hl-pending' });
    on[to].push({ p: s.suggestion[to], r: SUGGESTED_R[to], cls: 'hl-suggested', label: '?' });
  }
  return { afm, fl };
}
