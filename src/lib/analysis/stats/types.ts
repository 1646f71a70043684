/** A 2×2 table of counts [[a, b], [c, d]]: rows are groups, columns are outcome (positive, negative). */
export type Table2x2 = readonly [readonly [number, number], readonly [number, number]];

/** Direction of a test. 'greater' asks whether the first group / first sample tends to be larger. */
export type Alternative = 'two-sided' | 'greater' | 'less';

/** Positive and total vesicles of one cluster (a field) or one sample (counts). */
export interface FieldCount {
  readonly positive: number;
  readonly total: number;
}
