export * from './params';
export * from './lane-engine';
export * from './exact';
export * from './fast';
export * from './factory';
export * from './roundtrip';
export * from './roundtrip-step';
