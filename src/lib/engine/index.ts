export { place } from './place';
export { zoneGrid, computeZones } from './zones';
export { EngineInputError } from './errors';
export * from './types';
export { addedSites } from './added-sites';
