/**
 * The frame of a working grid over a raster: the working CRS, the extent (clipped to the study
 * area), the cell geometry and the study area and exclusions in working metres, with the errors a
 * user can meet there. The grid's values come from the mass-preserving aggregation in
 * ./aggregate.ts, the one way a raster becomes a working grid.
 */
import type { GridGeometry, Ring } from '../engine/rasterize';
import { chooseWorkingCrs, transformer, type PointTransform } from './crs';
import { boundsOf } from './geometry';
import { pixelToCrs, type RasterBand } from './geotiff';
import { projectRings } from './geojson';

export class WorkingGridError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'WorkingGridError';
	}
}

export interface WorkingGridOptions {
	/** Working CRS override (EPSG code or "EPSG:n"); otherwise chosen by chooseWorkingCrs. */
	crs?: number | string | null;
	/**
	 * Study area polygons (each a list of WGS 84 lon/lat rings, even-odd within a polygon, union
	 * across polygons); cells outside get mass 0, feasible 0, and the grid is clipped to it.
	 */
	studyArea?: ReadonlyArray<readonly Ring[]>;
	/** Exclusion polygons (each a list of lon/lat rings); cells inside get mass 0, feasible 0. */
	exclusions?: ReadonlyArray<readonly Ring[]>;
	/** Largest accepted number of cells; default 64 million. */
	maxCells?: number;
}

/** Size of one source pixel in working metres at source pixel (col, row): sqrt of its area. */
export function pixelSizeMetres(raster: RasterGeometry, toWork: PointTransform, col: number, row: number): number {
	const p = (c: number, r: number) => {
		const [x, y] = pixelToCrs(raster.transform, c, r);
		return toWork(x, y);
	};
	const o = p(col, row);
	const a = p(col + 1, row);
	const b = p(col, row + 1);
	const area = Math.abs((a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0]));
	return Math.sqrt(area);
}

/** The error for a raster with nothing to place on (the same words for every way of reading it). */
export function noValidCells(): WorkingGridError {
	return new WorkingGridError('the raster has no valid cells: every cell is nodata, NaN or negative');
}

/** What planning a grid needs of a raster: its size, georeferencing and CRS, no samples. */
export type RasterGeometry = Pick<RasterBand, 'width' | 'height' | 'transform' | 'epsg'>;

/** A working grid's frame: CRS, transforms, geometry and the study area/exclusions in working metres. */
export interface WorkingFrame {
	epsg: number;
	sameCrs: boolean;
	toWork: PointTransform;
	toSource: PointTransform;
	geom: GridGeometry;
	/** The raster's pixel size in working metres (√ of a central pixel's area). */
	srcPixelM: number;
	studyPolygons: Ring[][] | null;
	exclusionPolygons: Ring[][];
}

/** The cell size, given the raster's pixel size, the extent to cover (working metres) and whether the CRS is the raster's. */
export type CellSizePicker = (pixelM: number, extentWidth: number, extentHeight: number, sameCrs: boolean) => number;

/**
 * Frame of a working grid over a raster: working CRS (opts.crs, else chooseWorkingCrs), the
 * raster's extent clipped to the study area's bounding box, cells of `pickCell`'s size aligned with
 * the raster's pixel corners when the CRS is the raster's own.
 */
export function planFrame(raster: RasterGeometry, opts: Pick<WorkingGridOptions, 'crs' | 'studyArea' | 'exclusions' | 'maxCells'>, pickCell: CellSizePicker): WorkingFrame {
	const maxCells = opts.maxCells ?? 64_000_000;
	// Centre of the area: the study area's bounding box if given, else the raster's centre.
	const toLonLat = transformer(raster.epsg, 4326).forward;
	let centre: [number, number];
	const areaBox = opts.studyArea ? boundsOf([], opts.studyArea) : null;
	if (areaBox) {
		centre = [(areaBox[0] + areaBox[2]) / 2, (areaBox[1] + areaBox[3]) / 2];
	} else {
		const [cx, cy] = pixelToCrs(raster.transform, raster.width / 2, raster.height / 2);
		centre = toLonLat(cx, cy);
	}
	const epsg = chooseWorkingCrs(raster.epsg, centre, opts.crs);
	const sameCrs = epsg === raster.epsg;
	const { forward: toWork, inverse: toSource } = sameCrs
		? { forward: (x: number, y: number): [number, number] => [x, y], inverse: (x: number, y: number): [number, number] => [x, y] }
		: transformer(raster.epsg, epsg);

	// Extent of the raster in the working CRS, from points along its boundary.
	let minX = Infinity, maxX = -Infinity, minY = Infinity, maxY = -Infinity;
	const edgeSteps = 64;
	const addPixel = (c: number, r: number) => {
		const [sx, sy] = pixelToCrs(raster.transform, c, r);
		const [x, y] = toWork(sx, sy);
		if (!Number.isFinite(x) || !Number.isFinite(y)) return;
		minX = Math.min(minX, x); maxX = Math.max(maxX, x);
		minY = Math.min(minY, y); maxY = Math.max(maxY, y);
	};
	for (let k = 0; k <= edgeSteps; k++) {
		const t = k / edgeSteps;
		addPixel(t * raster.width, 0);
		addPixel(t * raster.width, raster.height);
		addPixel(0, t * raster.height);
		addPixel(raster.width, t * raster.height);
	}
	if (!(maxX > minX && maxY > minY)) {
		throw new WorkingGridError(`the raster cannot be placed in EPSG:${epsg} (its extent does not project)`);
	}

	const srcPixelM = pixelSizeMetres(raster, toWork, raster.width / 2, raster.height / 2);
	const checkCell = (c: number) => {
		if (!(c > 0) || !Number.isFinite(c)) throw new WorkingGridError(`cell size ${c} m is not a positive number`);
		return c;
	};
	let cellSize = checkCell(pickCell(srcPixelM, maxX - minX, maxY - minY, sameCrs));

	// Study area and exclusions in working metres; the study area also clips the extent.
	const projLonLat = transformer(4326, epsg).forward;
	const project = (polys: ReadonlyArray<readonly Ring[]> | undefined, size: number) => (polys ?? []).map((p) => projectRings(p, projLonLat, size * 4));
	let studyPolygons = opts.studyArea && opts.studyArea.length > 0 ? project(opts.studyArea, cellSize) : null;
	const studyBox = studyPolygons ? boundsOf([], studyPolygons) : null;
	if (studyBox) {
		const [sMinX, sMinY, sMaxX, sMaxY] = studyBox;
		minX = Math.max(minX, sMinX); maxX = Math.min(maxX, sMaxX);
		minY = Math.max(minY, sMinY); maxY = Math.min(maxY, sMaxY);
		if (!(maxX > minX && maxY > minY)) throw new WorkingGridError('the study area does not overlap the raster');
		const clipped = checkCell(pickCell(srcPixelM, maxX - minX, maxY - minY, sameCrs));
		if (clipped !== cellSize) {
			cellSize = clipped;
			studyPolygons = project(opts.studyArea, cellSize);
		}
	}

	// Align with the raster's own pixel corners when it is already in the working CRS.
	const ax = sameCrs ? raster.transform[0] : 0;
	const ay = sameCrs ? raster.transform[3] : 0;
	const x0 = ax + Math.floor((minX - ax) / cellSize + 1e-9) * cellSize;
	const y0 = ay + Math.ceil((maxY - ay) / cellSize - 1e-9) * cellSize;
	const width = Math.max(1, Math.ceil((maxX - x0) / cellSize - 1e-9));
	const height = Math.max(1, Math.ceil((y0 - minY) / cellSize - 1e-9));
	if (width * height > maxCells) {
		throw new WorkingGridError(`${width}×${height} cells of ${cellSize} m is over the limit of ${maxCells} cells; choose a larger cell size or a smaller study area`);
	}
	return { epsg, sameCrs, toWork, toSource, geom: { width, height, x0, y0, cellSize }, srcPixelM, studyPolygons, exclusionPolygons: project(opts.exclusions, cellSize) };
}
