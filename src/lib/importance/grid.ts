/**
 * Raster grids as the importance code sees them: a north-up regular grid in one CRS and a flat,
 * row-major array of values. Row 0 is the northern-most row; cell (r, c) covers
 *   x in [x0 + c·dx, x0 + (c+1)·dx],   y in [y0 − (r+1)·dy, y0 − r·dy]
 * where (x0, y0) is the outer upper-left corner. Pure data, usable in the browser and on the server.
 */

export interface GridSpec {
	/** EPSG code of the grid's CRS. */
	epsg: number;
	width: number;
	height: number;
	/** Outer upper-left corner, CRS units. */
	x0: number;
	y0: number;
	/** Cell width and height in CRS units, both > 0 (rows run south). */
	dx: number;
	dy: number;
	/** CRS units: metres (projected) or degrees (geographic). Default 'metre'. */
	units?: 'metre' | 'degree';
}

export interface GridBand {
	grid: GridSpec;
	/** width·height values, row-major. */
	data: ArrayLike<number>;
	/** Cells equal to this value (or NaN) carry no data. */
	nodata: number | null;
}

/** A recipe or grid that cannot be used, with a message fit for the user. */
export class ImportanceError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'ImportanceError';
	}
}

/** True where the cell holds a usable value (finite and not the nodata value). */
export function isValidValue(v: number, nodata: number | null): boolean {
	return Number.isFinite(v) && (nodata === null || v !== nodata);
}

/** Band values as Float64 with NaN for every cell without data (a new array). */
export function toNaNArray(band: GridBand): Float64Array {
	const n = band.grid.width * band.grid.height;
	if (band.data.length !== n) {
		throw new ImportanceError(`Band has ${band.data.length} values but its grid is ${band.grid.width}×${band.grid.height}`);
	}
	const out = new Float64Array(n);
	for (let i = 0; i < n; i++) {
		const v = band.data[i];
		out[i] = isValidValue(v, band.nodata) ? v : NaN;
	}
	return out;
}

/** Tolerance for comparing grid coordinates: a millionth of a cell. */
function near(a: number, b: number, cell: number): boolean {
	return Math.abs(a - b) <= 1e-6 * cell;
}

export function sameGrid(a: GridSpec, b: GridSpec): boolean {
	return (
		a.epsg === b.epsg &&
		a.width === b.width &&
		a.height === b.height &&
		near(a.dx, b.dx, a.dx) &&
		near(a.dy, b.dy, a.dy) &&
		near(a.x0, b.x0, a.dx) &&
		near(a.y0, b.y0, a.dy)
	);
}

/** Mean Earth radius in metres (IUGG, R1 = 6 371 008.8 m) [from memory]. */
const EARTH_RADIUS_M = 6_371_008.8;

/**
 * Cell size in metres. For a geographic grid the sizes are taken at the latitude of the grid's
 * centre on a sphere of mean Earth radius (good to well under 1 % for the window sizes used here).
 */
export function cellSizeMetres(grid: GridSpec): { x: number; y: number } {
	if ((grid.units ?? 'metre') === 'metre') return { x: grid.dx, y: grid.dy };
	const metresPerDegree = (Math.PI / 180) * EARTH_RADIUS_M;
	const centreLat = grid.y0 - (grid.height * grid.dy) / 2;
	return { x: grid.dx * metresPerDegree * Math.cos((centreLat * Math.PI) / 180), y: grid.dy * metresPerDegree };
}
