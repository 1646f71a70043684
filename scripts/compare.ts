/**
 * Group comparisons from a counts table, with the sample (donor) as the unit:
 *   npm run compare -- --counts counts.csv --group-a A --group-b B --out result.json
 * See docs/statistics.md for the table, the method and the result. Exit codes: 0 done, 2 bad input or usage.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { parseArgs } from 'node:util';
import { compareCounts, CountsTableError } from '../src/lib/reporting/compareCounts';
import { RESEARCH_USE_NOTICE } from '../src/lib/reporting/researchUse';

const USAGE = 'usage: npm run compare -- --counts counts.csv --group-a A --group-b B --out result.json';

function fail(message: string): never {
  process.stderr.write(`compare: ${message}\n`);
  process.exit(2);
}

let values;
try {
  ({ values } = parseArgs({ options: { counts: { type: 'string' }, 'group-a': { type: 'string' }, 'group-b': { type: 'string' }, out: { type: 'string' } } }));
} catch (e) {
  fail(`${(e as Error).message}\n${USAGE}`);
}
const { counts, 'group-a': groupA, 'group-b': groupB, out } = values;
if (!counts || !groupA || !groupB || !out) fail(`give --counts, --group-a, --group-b and --out.\n${USAGE}`);
let text: string;
try {
  text = readFileSync(counts, 'utf8');
} catch (e) {
  fail(`cannot read ${counts}: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`);
}
try {
  const result = compareCounts(text, groupA, groupB);
  writeFileSync(out, JSON.stringify({ caution: RESEARCH_USE_NOTICE, ...result }, null, 2) + '\n');
  const studies = new Set(result.comparisons.map((c) => c.study)).size;
  process.stdout.write(`${result.comparisons.length} comparison(s) over ${studies} study(ies) written to ${out}. ${RESEARCH_USE_NOTICE}\n`);
} catch (e) {
  if (e instanceof CountsTableError) fail(`${counts}: ${e.message}`);
  throw e;
}
