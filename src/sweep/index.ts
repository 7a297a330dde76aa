/** The sweep room: grids, worker pool, point files, maps, shards, merging, batches. */
export * from './grid';
export * from './persist';
export * from './shard';
export * from './pool';
export * from './map';
export * from './refine';
export * from './run-sweep';
export * from './merge';
export * from './batch';
export type { SweepTask, PointTask, RunTask, TaskResult } from './worker';
export { runPointTask, runTask, REFERENCE_CACHE_SIZE } from './worker';
