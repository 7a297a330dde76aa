/** The scenario room: schema, units, errors, loading and validation. */
export * from './schema';
export * from './units';
export * from './errors';
export * from './keypath';
export * from './shape';
export * from './canonical';
export { loadScenarioFile, parseScenarioText } from './load';
export type { LoadedScenario } from './load';
export { withOverrides, validateScenario, axisKeyProblem } from './validate';
export type { ValidationResult } from './validate';
export * from './kinds';
