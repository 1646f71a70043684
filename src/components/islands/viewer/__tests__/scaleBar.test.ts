import { describe, it, expect } from 'vitest';
import { SCALE_BAR_UM, scaleBarFor } from '../scaleBar';

describe('scaleBarFor', () => {
  it('picks the listed length closest to the wanted on-screen length (hand computation)', () => {
    // 0.02 µm per screen px, 120 px wanted: 2.4 µm → 2.5 µm, drawn 2.5 / 0.02 = 125 px
    expect(scaleBarFor(0.02, 120)).toEqual({ px: 125, um: 2.5, label: '2.5 µm' });
    // 0.0025 µm per px: 0.3 µm → 0.25 µm (0.05 away, nearer than 0.5) = 100 px, shown in nm
    expect(scaleBarFor(0.0025, 120)).toEqual({ px: 100, um: 0.25, label: '250 nm' });
    // 0.1 µm per px, 30 px wanted (a canvas 150 px wide, a fifth of it): 3 µm → 2.5 µm (2 is 1 away, 5 is 2)
    expect(scaleBarFor(0.1, 30)).toEqual({ px: 25, um: 2.5, label: '2.5 µm' });
  });

  it('stays at the ends of the list outside it, and takes the first of two equally close lengths', () => {
    expect(scaleBarFor(1e-5, 120).um).toBe(SCALE_BAR_UM[0]);
    expect(scaleBarFor(100, 120).um).toBe(500);
    // 1.5 µm is 0.5 from both 1 and 2
    expect(scaleBarFor(0.0125, 120).um).toBe(1);
    expect(scaleBarFor(0.01, 150, [0.1, 1, 2]).um).toBe(1);
  });
});
