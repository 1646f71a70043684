/** The small raw-SQL helpers the results query modules share. */
import type { Db } from '../client';

/** Runs `text` with `params` and returns the rows typed as T (the SQL names its columns to match T). */
export async function rows<T>(db: Db, text: string, params: unknown[] = []): Promise<T[]> {
  return (await db.$client.query(text, params)).rows as T[];
}

/** Anything with pg's `query(text, params)`: the pool, or a client inside a transaction. */
export interface Queryable { query(text: string, params: unknown[]): Promise<{ rows: unknown[] }> }

/** A study's marker panel in channel order. */
export type Panel = { channelIndex: number; marker: string }[];

/** Bit of a panel channel in `marker_bits`; channel indexes are integers from the DB, never user text. */
export function channelBit(channelIndex: number): number {
  if (!Number.isInteger(channelIndex) || channelIndex < 0 || channelIndex > 30) throw new RangeError(`channel index ${channelIndex} out of 0…30`);
  return 2 ** channelIndex;
}
