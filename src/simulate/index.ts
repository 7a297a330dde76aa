export * from './run';
export * from './compare';
