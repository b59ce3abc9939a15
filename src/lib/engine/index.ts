export { place } from './place';
export { EngineInputError } from './errors';
export * from './types';
