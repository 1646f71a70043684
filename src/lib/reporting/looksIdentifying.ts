/** Why a sample code or a free text looks like it could identify a person. */
export type IdentifyingReason = 'date_like' | 'name_like' | 'record_number' | 'initials';

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
  // a month name next to a day: 12Mar1980, March-12, 03-mar-80, 4th of May (a month with only a year is allowed:
  // collection dates are kept to the month)
  const lower = code.toLowerCase();
  for (const m of lower.matchAll(/[a-z]+/g)) {
    if (!MONTH_WORDS.has(m[0])) continue;
    const before = lower.slice(Math.max(0, m.index - 8), m.index);
    const after = lower.slice(m.index + m[0].length, m.index + m[0].length + 6);
    if (/(^|[^\d])\d{1,2}(st|nd|rd|th)?( of)?[-./ ]?$/.test(before) || /^[-./ ]?\d{1,2}(st|nd|rd|th)?(?!\d)/.test(after)) return true;
  }
  return false;
}

/**
 * Record, hospital or insurance numbers: a keyword labs use for them followed by a number of 4 or more digits
 * ("MRN 00123456", "Hosp no 4471-223", "NHS 943 476 5919"), or a bare run of 7 or more digits, which a
 * de-identified code never needs (common practice: study codes are short running numbers).
 */
function recordNumberLike(text: string): boolean {
  const keyword = /(^|[^a-z])(mrn|mr ?no|mr#|urn?|hosp(ital)?|record|rec|nhs|chart|pid|patient ?(id|no|nr|number|#)|pt ?(id|no|nr|#)|case ?(no|nr|#)|medicare|medicaid|ssn|insurance|ins ?no|health ?(card|no|number))[\s.:#_-]*(no\.?|nr\.?|num(ber)?|#|id)?[\s.:#_-]*\d[\d\s/-]{2,}\d/i;
  if (keyword.test(text)) return true;
  if (/(?<!\d)\d{3}[ -]\d{3}[ -]\d{4}(?!\d)/.test(text)) return true;
  for (const m of text.matchAll(/(?<!\d)\d{7,}(?!\d)/g)) {
    // an 8-digit date is reported as a date, not as a number
    if (!(m[0].length === 8 && dateLike(m[0]))) return true;
  }
  return false;
}

/**
 * Initials: dotted ("J.D.", "J. D."), after a title or a word for a person ("pt JD", "Mrs K"), labelled
 * ("initials JD"), or two or three capitals run into a birth year ("JD1975", "AB-1964"). Plain capitals such as
 * "HC-03" or "PDAC-12" pass: codes are made of them.
 */
function initialsLike(text: string): boolean {
  if (/(^|[^A-Za-z])[A-Z]\.\s?[A-Z](\.|(?![A-Za-z]))/.test(text)) return true;
  if (/\binitials?\b[\s.:=_-]*[A-Z]{1,3}\b/i.test(text)) return true;
  if (/\b(pt|patient|donor|subject)\.?[\s_-]+[A-Z]{2,3}\b(?![-_ ]?\d)/.test(text)) return true;
  if (/\b([Mm]rs?|MRS?|[Mm]s|MS|[Mm]iss|[Dd]r|DR)\.?[\s_-]+[A-Z]{1,3}\b(?![-_ ]?\d)/.test(text)) return true;
  if (/(^|[^A-Za-z])[A-Z]{2,3}[-_ ]?(19[2-9]\d|200\d)(?!\d)/.test(text)) return true;
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

/** Options of {@link looksIdentifying}. */
export interface LooksIdentifyingOptions {
  /**
   * What the text is, as the start of a sentence ("The code", "The group label", "The file name"). Codes
   * (the default) also get the code-only name heuristics; other texts are read as prose.
   */
  what?: string;
  /** `code` for sample codes, field and file names (short identifiers); `text` for labels and notes. @default 'code' */
  kind?: 'code' | 'text';
  /** Personal names found in the text by a name lexicon (the server passes one; see personalNames.ts). */
  findNames?: (text: string) => string[];
}

/**
 * Warns when a sample code or a free text looks like it could identify a person: a plausible full date (of
 * birth), a record or hospital number, initials, or a personal name. A heuristic for a warning, not a
 * guarantee either way.
 *
 * @param text - the text as typed
 * @param o - see {@link LooksIdentifyingOptions}
 * @returns whether it looks identifying and why, with messages a biologist can act on
 */
export function looksIdentifying(text: string, o: LooksIdentifyingOptions = {}): LooksIdentifyingResult {
  const { what = 'The code', kind = 'code', findNames } = o;
  const isCode = kind === 'code';
  const reasons: LooksIdentifyingResult['reasons'] = [];
  const trimmed = text.trim();
  if (!trimmed) return { identifying: false, reasons };
  if (dateLike(trimmed)) {
    reasons.push({ code: 'date_like', message: isCode && what === 'The code'
      ? 'The code contains something that looks like a date. Do not use dates of birth or collection dates in codes; record the collection date in its own field.'
      : `${what} contains something that looks like a full date. Remove dates of birth and full dates; a sample's collection month goes in its own field.` });
  }
  if (recordNumberLike(trimmed)) {
    reasons.push({ code: 'record_number', message: `${what} contains what looks like a medical record, hospital or insurance number. Remove it: the key between codes and records stays at the clinic.` });
  }
  if (initialsLike(trimmed)) {
    reasons.push({ code: 'initials', message: `${what} contains what look like a person's initials. Use a de-identified code (for example a study prefix and a number).` });
  }
  // words split at _ - . so that "doe_jane" reads as two words for the lexicon
  const names = findNames?.(trimmed.replace(/[_.\-/]+/g, ' ')) ?? [];
  if ((isCode && nameLike(trimmed)) || names.length) {
    reasons.push({ code: 'name_like', message: isCode && what === 'The code'
      ? "The code looks like a person's name. Use a de-identified code (for example a study prefix and a number)."
      : `${what} looks like it contains a person's name${names.length ? ` (${names[0]})` : ''}. Remove it: collaborators and exports see this text.` });
  }
  return { identifying: reasons.length > 0, reasons };
}
