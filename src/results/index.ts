/** The results room: every result file's type, name, version, writer helpers and one validating reader. */
export * from './files';
export * from './summary';
export * from './artifacts';
export * from './map';
export * from './batch';
export * from './compare';
export * from './points';
export * from './sweep-header';
export * from './read';
export * from './lock';
export * from './marker';
export * from './destination';
