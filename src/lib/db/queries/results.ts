/**
 * Former home of every results query, now split by concern; these re-exports keep older imports working
 * while callers move to the modules themselves:
 * - sampleSelection.ts (sample, panel, current runs, latest release), releases.ts, fieldRemoval.ts,
 * - sampleResults.ts and comparisonInput.ts (rows only; the statistics are in src/lib/reporting and src/lib/analysis/stats),
 * - resultListings.ts, vesicleExport.ts, checklistInput.ts.
 */
export { getSampleContext, getPanel, getSampleSelectionFacts, getCurrentLinkRunIds, type SampleContext } from './sampleSelection';
export { createRelease, type ReleaseOutcome } from './releases';
export { fieldReleaseVersions, removeField, type FieldRemoval } from './fieldRemoval';
export { getSampleResults } from './sampleResults';
export { getComparisonFacts, getComparisonRows } from './comparisonInput';
export { listResultGroups, listReleasedSamples } from './resultListings';
export { pageVesicles, type VesicleExportRow } from './vesicleExport';
export { getChecklistInput } from './checklistInput';
