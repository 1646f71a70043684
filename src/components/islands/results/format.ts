/** Display helpers for the results views (fractions as percent with their interval). */
export const pct = (x: number | null, digits = 1) => (x === null ? '–' : `${(x * 100).toFixed(digits)} %`);
export const ci = (lo: number | null, hi: number | null) => (lo === null || hi === null ? '–' : `${(lo * 100).toFixed(1)}–${(hi * 100).toFixed(1)} %`);
export const nm = (x: number | null, digits = 1) => (x === null ? '–' : `${x.toFixed(digits)} nm`);
export const pValue = (p: number | null) => (p === null ? '–' : p < 0.0001 ? '< 0.0001' : p.toFixed(4));
