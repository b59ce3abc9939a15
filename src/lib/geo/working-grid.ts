/**
 * Resampling of a raster band into the engine's WorkingGrid: square cells in a projected, metric
 * working CRS, with importance mass (sums to 1) and feasibility.
 *
 * Reprojection goes through a coarse lattice of control points transformed exactly with proj4;
 * cell positions in between are interpolated bilinearly. The lattice is refined until the measured
 * interpolation error (at the centre of every lattice cell, where bilinear error peaks) is below
 * `maxControlError` cells. Memory: typed arrays only, no per-cell objects.
 */
import type { WorkingGrid } from '../engine/types';
import { rasterizeRings, type GridGeometry, type Ring } from '../engine/rasterize';
import { chooseWorkingCrs, crsLabel, transformer, type PointTransform } from './crs';
import { boundsOf } from './geometry';
import { crsToPixel, pixelToCrs, storedNodata, type RasterBand } from './geotiff';
import { projectRings } from './geojson';

export class WorkingGridError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'WorkingGridError';
	}
}

export type Sampling = 'nearest' | 'bilinear';

export interface WorkingGridOptions {
	/** Working CRS override (EPSG code or "EPSG:n"); otherwise chosen by chooseWorkingCrs. */
	crs?: number | string | null;
	/** Cell side in metres; default ≈ the raster's pixel size in the working CRS. */
	cellSize?: number;
	/** Default 'bilinear'. */
	sampling?: Sampling;
	/**
	 * Study area polygons (each a list of WGS 84 lon/lat rings, even-odd within a polygon, union
	 * across polygons); cells outside get mass 0, feasible 0, and the grid is clipped to it.
	 */
	studyArea?: ReadonlyArray<readonly Ring[]>;
	/** Exclusion polygons (each a list of lon/lat rings); cells inside get mass 0, feasible 0. */
	exclusions?: ReadonlyArray<readonly Ring[]>;
	/** Largest accepted number of cells; default 64 million. */
	maxCells?: number;
	/** Largest accepted control-lattice interpolation error, in cells; default 0.05. */
	maxControlError?: number;
}

export interface WorkingGridResult {
	grid: WorkingGrid;
	epsg: number;
	/** Spacing of the control lattice in cells (1 = every cell transformed exactly). */
	controlStep: number;
	/** Largest interpolation error measured on the lattice, in cells. */
	controlError: number;
}

/** Maps working-grid cells to fractional source-pixel positions through the control lattice. */
export interface CellToPixel {
	step: number;
	/** Fractional source (col, row) of the centre of cell (c, r), interpolated. */
	at(c: number, r: number): [number, number];
	/** Fills px/py (length width) with the positions of the centres of row r. */
	row(r: number, px: Float64Array, py: Float64Array): void;
}

/** Exact source-pixel position of working-CRS point (x, y). */
function exactPixel(toSource: PointTransform, raster: RasterBand, x: number, y: number): [number, number] {
	const [sx, sy] = toSource(x, y);
	if (!Number.isFinite(sx) || !Number.isFinite(sy)) return [Number.NaN, Number.NaN];
	return crsToPixel(raster.transform, sx, sy);
}

/** Build the control lattice of spacing `step` cells over a grid. */
export function buildCellToPixel(geom: GridGeometry, raster: RasterBand, toSource: PointTransform, step: number): CellToPixel {
	const nx = Math.ceil(Math.max(geom.width - 1, 0) / step) + 1;
	const ny = Math.ceil(Math.max(geom.height - 1, 0) / step) + 1;
	const nodeX = new Float64Array(nx * ny);
	const nodeY = new Float64Array(nx * ny);
	for (let j = 0; j < ny; j++) {
		const y = geom.y0 - (j * step + 0.5) * geom.cellSize;
		for (let i = 0; i < nx; i++) {
			const x = geom.x0 + (i * step + 0.5) * geom.cellSize;
			const [px, py] = exactPixel(toSource, raster, x, y);
			nodeX[j * nx + i] = px;
			nodeY[j * nx + i] = py;
		}
	}
	const rowX = new Float64Array(nx);
	const rowY = new Float64Array(nx);
	const interpRow = (r: number) => {
		const j = Math.min(Math.floor(r / step), ny - 2 < 0 ? 0 : ny - 2);
		const fy = ny === 1 ? 0 : r / step - j;
		const j1 = ny === 1 ? j : j + 1;
		for (let i = 0; i < nx; i++) {
			rowX[i] = nodeX[j * nx + i] * (1 - fy) + nodeX[j1 * nx + i] * fy;
			rowY[i] = nodeY[j * nx + i] * (1 - fy) + nodeY[j1 * nx + i] * fy;
		}
	};
	const interpCol = (c: number): [number, number] => {
		const i = Math.min(Math.floor(c / step), nx - 2 < 0 ? 0 : nx - 2);
		const fx = nx === 1 ? 0 : c / step - i;
		const i1 = nx === 1 ? i : i + 1;
		return [rowX[i] * (1 - fx) + rowX[i1] * fx, rowY[i] * (1 - fx) + rowY[i1] * fx];
	};
	return {
		step,
		at(c, r) {
			interpRow(r);
			return interpCol(c);
		},
		row(r, px, py) {
			interpRow(r);
			for (let c = 0; c < geom.width; c++) {
				const i = Math.min(Math.floor(c / step), nx - 2 < 0 ? 0 : nx - 2);
				const fx = nx === 1 ? 0 : c / step - i;
				const i1 = nx === 1 ? i : i + 1;
				px[c] = rowX[i] * (1 - fx) + rowX[i1] * fx;
				py[c] = rowY[i] * (1 - fx) + rowY[i1] * fx;
			}
		}
	};
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

function isValid(v: number, nodata: number | null): boolean {
	return v === v && v >= 0 && v !== nodata && Number.isFinite(v);
}

function hasValidCell(raster: RasterBand): boolean {
	const nodata = storedNodata(raster);
	for (let i = 0; i < raster.data.length; i++) if (isValid(raster.data[i], nodata)) return true;
	return false;
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

/** Resample a raster band into a WorkingGrid. Pure: the raster is not modified. */
export function buildWorkingGrid(raster: RasterBand, opts: WorkingGridOptions = {}): WorkingGridResult {
	const sampling = opts.sampling ?? 'bilinear';
	const maxErr = opts.maxControlError ?? 0.05;
	const frame = planFrame(raster, opts, (pixelM, _w, _h, sameCrs) => opts.cellSize ?? (sameCrs ? pixelM : Number(pixelM.toPrecision(3))));
	const { epsg, toSource, geom, srcPixelM, studyPolygons } = frame;
	const { width, height, x0, y0, cellSize } = geom;

	// Control lattice, refined until its measured error is small enough.
	const cellsPerPixel = srcPixelM / cellSize;
	let step = Math.max(1, Math.min(32, Math.floor(Math.min(width, height) / 2)));
	let mapper = buildCellToPixel(geom, raster, toSource, step);
	let err = step === 1 ? 0 : latticeError(mapper, geom, raster, toSource, cellsPerPixel);
	while (step > 1 && !(err <= maxErr)) {
		step = Math.max(1, Math.floor(step / 2));
		mapper = buildCellToPixel(geom, raster, toSource, step);
		err = step === 1 ? 0 : latticeError(mapper, geom, raster, toSource, cellsPerPixel);
	}

	// Sample the raster.
	const n = width * height;
	if (!hasValidCell(raster)) throw noValidCells();
	const mass = new Float64Array(n);
	const feasible = new Uint8Array(n);
	const { data } = raster;
	// A Float32 band stores nodata rounded to single precision ("-3.4e+38" is not a float32 value).
	const nodata = storedNodata(raster);
	const W = raster.width;
	const H = raster.height;
	const px = new Float64Array(width);
	const py = new Float64Array(width);
	for (let r = 0; r < height; r++) {
		mapper.row(r, px, py);
		const base = r * width;
		for (let c = 0; c < width; c++) {
			const u = px[c];
			const v = py[c];
			if (!(u >= 0 && u < W && v >= 0 && v < H)) continue;
			const ci = Math.floor(u);
			const ri = Math.floor(v);
			const nearest = data[ri * W + ci];
			if (!isValid(nearest, nodata)) continue;
			let value = nearest;
			if (sampling === 'bilinear') {
				const uu = u - 0.5;
				const vv = v - 0.5;
				let i0 = Math.floor(uu);
				let j0 = Math.floor(vv);
				const fu = uu - i0;
				const fv = vv - j0;
				let i1 = i0 + 1;
				let j1 = j0 + 1;
				if (i0 < 0) i0 = 0;
				if (j0 < 0) j0 = 0;
				if (i1 >= W) i1 = W - 1;
				if (j1 >= H) j1 = H - 1;
				const a = data[j0 * W + i0];
				const b = data[j0 * W + i1];
				const d = data[j1 * W + i0];
				const e = data[j1 * W + i1];
				if (isValid(a, nodata) && isValid(b, nodata) && isValid(d, nodata) && isValid(e, nodata)) {
					value = (a * (1 - fu) + b * fu) * (1 - fv) + (d * (1 - fu) + e * fu) * fv;
				}
			}
			mass[base + c] = value;
			feasible[base + c] = 1;
		}
	}

	if (studyPolygons) {
		const inside = new Uint8Array(n);
		for (const polygon of studyPolygons) {
			const part = rasterizeRings(geom, polygon);
			for (let i = 0; i < n; i++) inside[i] |= part[i];
		}
		for (let i = 0; i < n; i++) if (inside[i] === 0) { mass[i] = 0; feasible[i] = 0; }
	}
	for (const polygon of frame.exclusionPolygons) {
		const out = rasterizeRings(geom, polygon);
		for (let i = 0; i < n; i++) if (out[i] === 1) { mass[i] = 0; feasible[i] = 0; }
	}

	let total = 0;
	for (let i = 0; i < n; i++) total += mass[i];
	if (total > 0 && Number.isFinite(total)) for (let i = 0; i < n; i++) mass[i] /= total;
	else if (!Number.isFinite(total)) throw new WorkingGridError('the raster values sum to infinity');

	return {
		grid: { crs: crsLabel(epsg), width, height, x0, y0, cellSize, mass, feasible },
		epsg,
		controlStep: step,
		controlError: err
	};
}

/**
 * Largest error of the lattice, in working cells, measured at the centre of every lattice cell
 * against the exact transform (source-pixel error scaled by the source pixel's size in cells).
 */
function latticeError(mapper: CellToPixel, geom: GridGeometry, raster: RasterBand, toSource: PointTransform, cellsPerPixel: number): number {
	const s = mapper.step;
	let worst = 0;
	for (let r = s / 2; r < geom.height; r += s) {
		for (let c = s / 2; c < geom.width; c += s) {
			const [ix, iy] = mapper.at(c, r);
			const [ex, ey] = exactPixel(toSource, raster, geom.x0 + (c + 0.5) * geom.cellSize, geom.y0 - (r + 0.5) * geom.cellSize);
			if (!Number.isFinite(ex) || !Number.isFinite(ey)) continue;
			const e = Math.hypot(ix - ex, iy - ey) * cellsPerPixel;
			if (!(e <= worst)) worst = e; // NaN propagates as "worse"
		}
	}
	return worst;
}
