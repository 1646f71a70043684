/** Why a sample code looks like it could identify a person. */
export type IdentifyingReason = 'date_like' | 'name_like';

/** Result of {@link looksIdentifying}. */
export interface LooksIdentifyingResult {
  readonly identifying: boolean;
  readonly reasons: { code: IdentifyingReason; message: string }[];
}

const MONTHS = ['jan', 'feb', 'mar', 'apr', 'may', 'jun', 'jul', 'aug', 'sep', 'oct', 'nov', 'dec'];
const MONTH_WORDS = new Set([
  ...MONTHS, 'january', 'february', 'march', 'april', 'june', 'july', 'august', 'sept', 'september', 'october', 'november', 'december',
]);

/** Words that are common in de-identified lab codes and are not names (common practice). */
const LAB_WORDS = new Set([
  'patient', 'patients', 'control', 'controls', 'ctrl', 'healthy', 'donor', 'plasma', 'serum', 'urine', 'saliva', 'milk',
  'csf', 'sample', 'pool', 'pooled', 'batch', 'visit', 'day', 'week', 'baseline', 'pre', 'post', 'iso', 'isotype', 'buffer',
  'blank', 'only', 'secondary', 'cell', 'cells', 'line', 'media', 'medium', 'sec', 'sup', 'supernatant', 'group', 'arm',
  'treated', 'untreated', 'mock', 'sham', 'case', 'cohort', 'site', 'study', 'pilot', 'test', 'spike', 'lysed', 'triton',
  'hcp', 'sec', 'uc', 'edta', 'citrate', 'heparin', 'fresh', 'frozen', 'thawed', 'rep', 'replicate', 'tube', 'well', 'plate',
]);

function isValidDate(y: number, m: number, d: number): boolean {
  if (y < 1900 || y > 2099 || m < 1 || m > 12 || d < 1) return false;
  const days = [31, (y % 4 === 0 && y % 100 !== 0) || y % 400 === 0 ? 29 : 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31];
  return d <= days[m - 1];
}

const fullYear = (y: string) => (y.length === 4 ? Number(y) : Number(y) + (Number(y) > 30 ? 1900 : 2000));

function dateLike(code: string): boolean {
  // separated dates: 1980-03-12, 12/03/1980, 12.3.80, 3-12-1980
  for (const m of code.matchAll(/(?<!\d)(\d{1,4})[-./ ](\d{1,2})[-./ ](\d{1,4})(?!\d)/g)) {
    const [a, b, c] = [m[1], m[2], m[3]];
    if (a.length === 4 && isValidDate(Number(a), Number(b), Number(c))) return true;
    if (c.length === 4 || c.length === 2) {
      const y = fullYear(c);
      if (a.length <= 2 && (isValidDate(y, Number(b), Number(a)) || isValidDate(y, Number(a), Number(b)))) return true;
    }
  }
  // compact 8-digit dates: 19800312 or 12031980
  for (const m of code.matchAll(/(?<!\d)(\d{8})(?!\d)/g)) {
    const s = m[1];
    if (isValidDate(+s.slice(0, 4), +s.slice(4, 6), +s.slice(6, 8))) return true;
    if (isValidDate(+s.slice(4, 8), +s.slice(2, 4), +s.slice(0, 2)) || isValidDate(+s.slice(4, 8), +s.slice(0, 2), +s.slice(2, 4))) return true;
  }
  // a month name next to a day or year: 12Mar1980, March-12, 03-mar-80
  const lower = code.toLowerCase();
  for (const m of lower.matchAll(/[a-z]+/g)) {
    if (!MONTH_WORDS.has(m[0])) continue;
    const before = lower.slice(Math.max(0, m.index - 3), m.index);
    const after = lower.slice(m.index + m[0].length, m.index + m[0].length + 5);
    if (/\d/.test(before) || /^[-./ ]?\d/.test(after)) return true;
  }
  return false;
}

function nameLike(code: string): boolean {
  if (/[A-Za-z]{2,},\s*[A-Za-z]/.test(code)) return true; // "Smith, J"
  const words = code.match(/[A-Za-zÀ-ÖØ-öø-ÿ'’]+/g) ?? [];
  const candidates = words.filter((w) => {
    const lower = w.toLowerCase();
    if (LAB_WORDS.has(lower) || MONTH_WORDS.has(lower)) return false;
    // a capitalised word of ≥ 3 letters (Smith, Okafor), or an all-lower one of ≥ 3 letters in a code without digits (doe_jane)
    return /^[A-ZÀ-Ö][a-zß-ÿ'’]{2,}$/.test(w) || (!/\d/.test(code) && /^[a-zß-ÿ]{3,}$/.test(w));
  });
  const capitalised = candidates.filter((w) => /^[A-ZÀ-Ö]/.test(w));
  // Two name-like words ("Jane Doe", "doe_jane"), or one capitalised word with an initial ("J. Smith", "Smith J").
  if (candidates.length >= 2) return true;
  if (capitalised.length === 1 && /(^|[\s._-])[A-Z]\.?([\s._-]|$)/.test(code)) return true;
  return false;
}

/**
 * Warns when a sample code looks like it could identify a person: a plausible date (of birth) or a
 * personal name. A heuristic for a warning on the sample form, not a guarantee either way.
 *
 * @param code - the sample code as typed
 * @returns whether it looks identifying and why, with messages a biologist can act on
 */
export function looksIdentifying(code: string): LooksIdentifyingResult {
  const reasons: LooksIdentifyingResult['reasons'] = [];
  const trimmed = code.trim();
  if (dateLike(trimmed)) {
    reasons.push({ code: 'date_like', message: 'The code contains something that looks like a date. Do not use dates of birth or collection dates in codes; record the collection date in its own field.' });
  }
  if (nameLike(trimmed)) {
    reasons.push({ code: 'name_like', message: "The code looks like a person's name. Use a de-identified code (for example a study prefix and a number)." });
  }
  return { identifying: reasons.length > 0, reasons };
}
