/**
 * A script's command-line options through node:util parseArgs (strict: an unknown or malformed option is
 * refused). On a mistake it prints what was wrong and the usage line, then exits with status 2.
 */
import { parseArgs, type ParseArgsConfig } from 'node:util';

export function cliArgs<const T extends NonNullable<ParseArgsConfig['options']>>(options: T, usage: string, argv = process.argv.slice(2)) {
  try {
    return parseArgs({ args: argv, options, strict: true, allowPositionals: false }).values;
  } catch (e) {
    console.error(`${(e as Error).message}\n${usage}`);
    process.exit(2);
  }
}
