/**
 * Human label of a marker combination, e.g. bits 0b101 over [CD9, CD63, CD81] → "CD9+ CD63- CD81+": the one
 * phenotype notation, the same as the per-vesicle phenotype of the pipeline and its CSV (ASCII + and -, so a
 * spreadsheet filter or a search finds it as typed).
 *
 * @param bits - marker_bits (bit i = panel channel i positive)
 * @param markers - marker names in panel (channel) order
 * @returns the label; "no channels" for an empty panel
 */
export function phenotypeLabel(bits: number, markers: readonly string[]): string {
  if (markers.length === 0) return 'no channels';
  return markers.map((m, i) => `${m}${(bits & (1 << i)) !== 0 ? '+' : '-'}`).join(' ');
}
