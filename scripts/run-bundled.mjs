// `node scripts/run-bundled.mjs <name> [args...]`: runs build/cli/<name>.mjs (the command line or the worker as
// bundled JavaScript; see scripts/build-cli.mjs), rebuilding it first only when a source changed since the build.
// The bundle sees its own arguments in process.argv.slice(2), as when started directly.
import { pathToFileURL } from 'node:url';
import { ensureBundle } from './build-cli.mjs';

const name = process.argv[2];
if (!name) {
  process.stderr.write('usage: node scripts/run-bundled.mjs <analyze|worker> [args...]\n');
  process.exit(2);
}
process.argv.splice(2, 1);
await import(pathToFileURL(await ensureBundle(name)).href);
