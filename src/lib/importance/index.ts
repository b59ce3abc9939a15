export * from './grid';
export * from './recipe';
export * from './transforms';
export { localStdDev } from './summed-area';
export { combineLayers, type ImportanceSurface, type BandLookup } from './combine';
export { alignToGrid } from './align';
export * from './colour-ramp';
