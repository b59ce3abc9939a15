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
	 * The engine rejects NaN/negative values (EngineInputError) and normalises a sum ≠ 1.
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
	/** Largest number of updates (one update moves every movable sensor once). Default 500. */
	maxIterations?: number;
	/**
	 * Stop when no sensor moved more than this many metres in one update. Default
	 * 0.01 × cellSize. 0 runs exactly maxIterations updates (converged is then true only if the
	 * last update moved nothing).
	 */
	tolerance?: number;
	/** Seed for greenfield k-means++ seeding; default 1. */
	seed?: number;
	/**
	 * Greenfield: number of new sensors to seed (used when sensors is empty). They are seeded by
	 * weighted k-means++ on the feasible cell centres, named "S1".."SN", mobility 'relocatable'.
	 */
	count?: number;
	/** Radius for greenfield sensors, metres (required with count). */
	radius?: number;
	/**
	 * Optional minimum spacing between sensors, metres. A move that would bring a sensor closer
	 * than this to another is rejected for that update (the sensor stays).
	 */
	minSpacing?: number;
	/** Zone-balance dead-band on |sigma|; default 1 / (2N). */
	deadBand?: number;
	/**
	 * Largest step a sensor takes in one update, metres. Default: unbounded for lloyd and
	 * range-limited; max(2 × cellSize, 0.25 × median sensor radius) for zone-balanced.
	 */
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
	/** Updates performed (history has iterations + 1 entries). */
	iterations: number;
	converged: boolean;
	/** Locational cost H at the final positions, m² (full Voronoi cells, φ summing to 1). */
	cost: number;
	/** Share of the mass within R_i of its nearest sensor i, 0..1. */
	coverage: number;
	/**
	 * Importance-weighted 95th percentile of the distance from cell centres to the nearest
	 * sensor, metres (exact, computed once for the final positions).
	 */
	p95DistanceM: number;
	sensors: PlacedSensor[];
	zones: ZoneSummary[];
	history: HistoryEntry[];
}
