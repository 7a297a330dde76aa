/**
 * The report reads saved results only through the results room's validating readers
 * (src/results/read.ts); re-exported here for the report's callers.
 */
export { readRunArtifacts, readRunSummary, readSweepMap, readBatchIndex } from '../results/read';
