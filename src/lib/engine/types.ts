/**
 * Shared types of the siting engine. The engine is pure computation: no I/O, no database,
 * no DOM. Everything that reads files (GeoTIFF, GeoJSON) lives outside it and produces these.
 *
 * Grid convention: a regular grid of square cells in a projected, metric working CRS.
 * Row 0 is the northern-most row; cell (r, c) has its centre at
 *   x = x0 + (c + 0.5) * cellSize,   y = y0 - (r + 0.5) * cellSize
 * where (x0, y0) is the outer upper-left corner of cell (0, 0). Arrays are row-major:
 * index = r * width + c.
 */

export type Mobility = 'fixed' | 'relocatable' | 'mobile';

export const MOBILITIES: readonly Mobility[] = ['fixed', 'relocatable', 'mobile'];

export type Strategy = 'lloyd' | 'range-limited' | 'zone-balanced';

export const STRATEGIES: readonly Strategy[] = ['lloyd', 'range-limited', 'zone-balanced'];

export interface WorkingGrid {
	/** Working CRS as "EPSG:n" (always projected, metres). */
	crs: string;
	width: number;
	height: number;
	/** Outer upper-left corner of cell (0, 0), working CRS metres. */
	x0: number;
	y0: number;
	/** Side of a square cell in metres. */
	cellSize: number;
	/**
	 * Probability mass per cell: non-negative, sums to 1 (or all zero for an empty problem).
	 * Cells outside the study area, inside exclusions, nodata or negative carry 0.
	 */
	mass: Float64Array;
	/**
	 * 1 where a sensor may stand (valid data, inside the study area, outside every exclusion),
	 * 0 elsewhere. A valid cell of importance 0 is still feasible.
	 */
	feasible: Uint8Array;
}

/** The coarse partition used for balancing: one zone index per cell (-1 = in no zone). */
export interface ZoneMap {
	ids: string[];
	/** Length width*height; value is an index into ids, or -1. */
	cellZone: Int32Array;
}

export interface SensorInput {
	id: string;
	/** Working CRS metres. */
	x: number;
	y: number;
	/** Sensing radius in metres (> 0). */
	radius: number;
	mobility: Mobility;
	/** Optional cap on the distance this sensor may end up from where it started, metres. */
	maxTravel?: number;
}

export interface PlacementOptions {
	strategy: Strategy;
	/** Default 500. */
	maxIterations?: number;
	/** Stop when no sensor moved more than this many metres in one iteration; 0 runs every iteration. */
	tolerance?: number;
	/** Seed for greenfield k-means++ seeding; default 1. */
	seed?: number;
	/** Greenfield: number of new sensors to seed (used when sensors is empty). */
	count?: number;
	/** Radius for greenfield sensors, metres. */
	radius?: number;
	/** Optional minimum spacing between sensors, metres. */
	minSpacing?: number;
	/** Zone-balance dead-band on |sigma|; default 1 / (2N). */
	deadBand?: number;
	/** Zone-balanced: largest step a sensor takes in one iteration, metres; default 2 cells... see engine docs. */
	maxStep?: number;
	/** Called after each iteration (for progress reporting in workers). */
	onIteration?: (entry: HistoryEntry) => void;
}

export interface HistoryEntry {
	iteration: number;
	/** Locational cost H in m² (full Voronoi cells). */
	cost: number;
	/** Share of mass within R of its nearest sensor, 0..1. */
	coverage: number;
}

export interface ZoneSummary {
	id: string;
	mass: number;
	sensors: number;
	sigma: number;
}

export interface PlacedSensor {
	id: string;
	x: number;
	y: number;
	radius: number;
	mobility: Mobility;
	/** Zone id at the final position, or null. */
	zone: string | null;
	/** Straight-line distance from the start position, metres (0 for greenfield). */
	movedM: number;
}

export interface PlacementResult {
	crs: string;
	strategy: Strategy;
	iterations: number;
	converged: boolean;
	cost: number;
	coverage: number;
	/** Importance-weighted 95th percentile of the distance to the nearest sensor, metres. */
	p95DistanceM: number;
	sensors: PlacedSensor[];
	zones: ZoneSummary[];
	history: HistoryEntry[];
}
