// The alert rules evaluated inside every ingest transaction (API and command line alike).
import type { Executor } from '../../db/connection.ts';
import type { ApplyResult } from '../../db/certificateStore.ts';
import { outOfBandRule } from './outOfBand.ts';

export type IngestRule = (tx: Executor, written: ApplyResult) => Promise<void>;

export const INGEST_RULES: readonly IngestRule[] = [outOfBandRule];

export async function runIngestRules(tx: Executor, written: ApplyResult, rules: readonly IngestRule[] = INGEST_RULES): Promise<void> {
  for (const rule of rules) await rule(tx, written);
}
