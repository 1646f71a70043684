/**
 * `npm run compare`: group comparisons from a table of counts (pure: CSV text in, result object out).
 * The table has a header with `sample`, `group`, `vesicles`, optionally `field` (one row per field) and
 * `study` (each study compared on its own); every other column is a marker holding that row's positive
 * vesicles. Each study's samples go through compareGroups, the module the compare page and its CSV use.
 */
import { parse } from 'csv-parse/sync';
import { compareGroups, type GroupSample } from '../analysis/stats';

/** A bad table: `line` is the file line (1 = header), null for problems of the whole table. */
export class CountsTableError extends Error {
  constructor(readonly line: number | null, message: string) {
    super(message);
    this.name = 'CountsTableError';
  }
}

/** One entry of result.json's `comparisons`. */
export interface CountsComparison {
  study: string | null;
  marker: string;
  groupA: string;
  groupB: string;
  nSamplesA: number;
  nSamplesB: number;
  fractionA: number | null;
  fractionB: number | null;
  difference: number | null;
  ci95: [number, number] | null;
  pValue: number | null;
  pAdjusted: number | null;
  method: string;
}

const REQUIRED = ['sample', 'group', 'vesicles'] as const;
const OPTIONAL = ['field', 'study'] as const;

/**
 * @param csvText - the counts table (lines starting with # are comments)
 * @param groupA - group label of A, as written in the `group` column
 * @param groupB - group label of B
 * @returns one comparison per study and marker, studies in order of first appearance, markers in column order
 * @throws CountsTableError naming the line for missing columns, counts that are not whole numbers, a marker
 *   count above `vesicles`, a sample in two groups, a field given twice, or a group without samples
 */
export function compareCounts(csvText: string, groupA: string, groupB: string): { comparisons: CountsComparison[] } {
  if (groupA === groupB) throw new CountsTableError(null, `--group-a and --group-b are both "${groupA}"; name two different groups.`);
  let records: { record: string[]; info: { lines: number } }[];
  try {
    records = parse(csvText, { comment: '#', skip_empty_lines: true, trim: true, info: true, relax_column_count: true, bom: true }) as unknown as typeof records;
  } catch (e) {
    const line = (e as { lines?: number }).lines ?? null;
    throw new CountsTableError(line, `the table could not be read as CSV${line ? ` at line ${line}` : ''}: ${(e as Error).message}`);
  }
  if (records.length === 0) throw new CountsTableError(null, 'the table is empty; it needs a header row with sample, group and vesicles, and one column per marker.');
  const header = records[0].record.map((h) => h.trim());
  const headerLine = records[0].info.lines;
  const col = (name: string) => header.findIndex((h) => h.toLowerCase() === name);
  const missing = REQUIRED.filter((c) => col(c) < 0);
  if (missing.length) {
    throw new CountsTableError(headerLine, `the header (line ${headerLine}) has no column ${missing.map((m) => `"${m}"`).join(', ')}; it needs sample, group and vesicles, and one column per marker with its positive vesicles.`);
  }
  const [iSample, iGroup, iVesicles, iField, iStudy] = [...REQUIRED, ...OPTIONAL].map(col);
  const special = new Set([...REQUIRED, ...OPTIONAL].map(col).filter((i) => i >= 0));
  const markerCols = header.map((h, i) => ({ h, i })).filter((c) => !special.has(c.i));
  if (markerCols.length === 0) throw new CountsTableError(headerLine, `the header (line ${headerLine}) has no marker column; add one column per marker holding each row's positive vesicles.`);
  const blank = markerCols.find((c) => c.h === '');
  if (blank) throw new CountsTableError(headerLine, `column ${blank.i + 1} of the header (line ${headerLine}) has no name; name every marker column.`);

  type Acc = { group: string; line: number; positives: number[]; vesicles: number; fields: Set<string> };
  const studies = new Map<string | null, Map<string, Acc>>();
  for (const { record, info } of records.slice(1)) {
    const line = info.lines;
    const cell = (i: number) => (i >= 0 ? (record[i] ?? '').trim() : '');
    const sample = cell(iSample);
    const where = `line ${line}${sample ? ` (sample ${sample}${iField >= 0 && cell(iField) ? `, field ${cell(iField)}` : ''})` : ''}`;
    if (record.length !== header.length) throw new CountsTableError(line, `${where} has ${record.length} cells but the header has ${header.length}.`);
    if (!sample) throw new CountsTableError(line, `${where}: the sample is empty.`);
    const group = cell(iGroup);
    if (!group) throw new CountsTableError(line, `${where}: the group is empty.`);
    const count = (i: number, what: string) => {
      const text = cell(i);
      if (!/^\d+$/.test(text)) throw new CountsTableError(line, `${where}: ${what} is "${text}", not a whole number of vesicles.`);
      return Number(text);
    };
    const vesicles = count(iVesicles, 'vesicles');
    const positives = markerCols.map((c) => {
      const k = count(c.i, `the ${c.h} count`);
      if (k > vesicles) throw new CountsTableError(line, `${where}: the ${c.h} count ${k} is above vesicles (${vesicles}).`);
      return k;
    });
    const study = iStudy >= 0 ? cell(iStudy) : null;
    const bySample = studies.get(study) ?? studies.set(study, new Map()).get(study)!;
    const acc = bySample.get(sample);
    const field = cell(iField);
    if (!acc) {
      bySample.set(sample, { group, line, positives, vesicles, fields: new Set([field]) });
      continue;
    }
    if (acc.group !== group) throw new CountsTableError(line, `${where}: sample ${sample} is in group "${acc.group}" on line ${acc.line} and in "${group}" here; a sample belongs to one group.`);
    if (acc.fields.has(field)) {
      throw new CountsTableError(line, iField >= 0
        ? `${where}: field "${field}" of sample ${sample} appears twice (also on line ${acc.line}).`
        : `${where}: sample ${sample} appears twice (also on line ${acc.line}); add a field column when a sample has one row per field.`);
    }
    acc.fields.add(field);
    acc.vesicles += vesicles;
    positives.forEach((k, j) => { acc.positives[j] += k; });
  }
  if (studies.size === 0) throw new CountsTableError(null, 'the table has a header but no rows of counts.');

  const outcomes = markerCols.map((c) => ({ key: c.h, label: c.h, kind: 'marker' as const }));
  const comparisons: CountsComparison[] = [];
  for (const [study, bySample] of studies) {
    const samples: GroupSample[] = [...bySample].map(([sample, a]) => ({
      sample, group: a.group, counts: a.positives.map((positive) => ({ positive, total: a.vesicles })),
    }));
    for (const g of [groupA, groupB]) {
      if (!samples.some((s) => s.group === g)) {
        const present = [...new Set(samples.map((s) => s.group))].map((x) => `"${x}"`).join(', ');
        throw new CountsTableError(null, `${study === null ? '' : `study "${study}": `}group "${g}" has no samples (groups in the table: ${present}).`);
      }
    }
    const r = compareGroups({ groupA, groupB, outcomes, samples });
    for (const o of r.outcomes) {
      comparisons.push({
        study, marker: o.label, groupA, groupB, nSamplesA: o.nSamplesA, nSamplesB: o.nSamplesB, fractionA: o.fractionA, fractionB: o.fractionB,
        difference: o.difference, ci95: o.ci95 ? [o.ci95[0], o.ci95[1]] : null, pValue: o.pValue, pAdjusted: o.pAdjusted, method: o.method,
      });
    }
  }
  return { comparisons };
}
