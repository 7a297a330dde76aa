/**
 * The sweep folder's files now live in the results room (src/results/points.ts,
 * src/results/sweep-header.ts); this module re-exports them for code written against
 * the old place.
 */
export * from '../results/points';
export * from '../results/sweep-header';
export { SWEEP_FILES } from '../results/files';
