/** The benchmark room (`npm run bench`): speed and memory figures, never imported by the tool itself. */
export * from './profile';
export * from './bare-loop';
export * from './exact-rate';
export * from './fast-speedup';
export * from './map-timing';
export * from './memory';
export * from './table';
export * from './cpu-pair';
export * from './child';
