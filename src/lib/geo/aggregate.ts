/**
 * Streaming ingest of a GeoTIFF band into a WorkingGrid sized by the problem (see cell-size.ts):
 * the raster is read block row by block row (tiles decoded in parallel when a decoder pool is
 * given), from the coarsest overview that still has at least 2 × 2 pixels a cell, and every
 * pixel's importance mass is added to the working cell that holds its centre.
 *
 * Mass preservation. A pixel's mass is value × its area in the working CRS (from the Jacobian of
 * the reprojection, interpolated on a lattice). A cell's mass is the sum of its valid parts, so the
 * importance integral over any region made of whole cells is the raster's integral over that
 * region, and over any other region it differs by edge cells only. When pixels are not much finer
 * than the cell, each pixel is split into ku × kv sub-pixels (each at most 4, so that sub-pixels are
 * at most half a cell along each side of the pixel) that carry 1/(ku·kv) of its mass each, which
 * keeps cells from catching 0 or 2 centres. Each pixel's value is read and checked once, then
 * spread over its sub-pixels.
 *
 * At the coarse scale, on purpose:
 *   nodata      a nodata pixel (and NaN, ±∞, negative values) adds no mass; a cell with valid
 *               data on less than half its area is not feasible (no sensor stands there), but
 *               keeps the mass of its valid part;
 *   study area  each cell's mass is scaled by the share of it inside the study area (measured on
 *   exclusions  4 × 4 sub-cells: inside the study area and outside every exclusion); a cell is
 *               feasible only if at least half of it is such ground.
 *
 * Memory: the grid (mass and valid area, 8 + 4 bytes a cell, then 1 for feasibility), the lattice
 * (24 bytes a node, one node per ≤ 64 pixels squared) and two block rows of the raster (whose
 * buffers the reader reuses).
 */
import type { WorkingGrid } from '../engine/types';
import { rasterizeRings, type GridGeometry, type Ring } from '../engine/rasterize';
import { crsLabel, type PointTransform } from './crs';
import { chooseCellSize, type CellSizeChoice } from './cell-size';
import { pixelToCrs, type BlockReadOptions, type DecoderPool, type GeoTiffSource, type GeoTransform, type RasterBand, type RasterBlock } from './geotiff';
import { noValidCells, planFrame, WorkingGridError, type WorkingGridOptions } from './working-grid';

export interface AggregateOptions extends Pick<WorkingGridOptions, 'crs' | 'studyArea' | 'exclusions' | 'maxCells'> {
	/** A cell size asked for (metres); otherwise chooseCellSize's rule decides. */
	cellSize?: number | null;
	/** Smallest sensing radius in metres (rule 1 of chooseCellSize). */
	smallestRadius?: number | null;
	/** Cell-count budget (rule 2 of chooseCellSize). */
	cellBudget?: number;
	/** Read an overview when one is fine enough; default true. */
	useOverviews?: boolean;
	pool?: DecoderPool | null;
	/** Called with every block read, before it is aggregated (e.g. statistics of the same pass). */
	onBlock?: (block: RasterBlock, image: number) => void;
	/** Largest acceptable lattice error, in cells; default 0.02. */
	maxLatticeError?: number;
}

export interface AggregateResult {
	grid: WorkingGrid;
	epsg: number;
	cellSize: CellSizeChoice;
	/** The image read: 0 = full resolution, otherwise the overview's index. */
	image: { index: number; width: number; height: number };
	/** Importance integral kept in the grid (value × m²), before mass was normalised to 1. */
	integral: number;
	/** Area of valid data in each cell, m² (a cell's mean value is its mass × integral / this). */
	validArea: Float32Array;
	/** Sub-pixels along the longer of the pixel's two sides (1 = pixel centres only). */
	subsamples: number;
	/** Sub-pixels along the pixel's row (u) and column (v) directions. */
	subsamplesUV: [number, number];
	latticeStep: number;
	latticeError: number;
	pixelsRead: number;
}

/**
 * Largest working grid built by default (a requested cell size can ask for more than the budget):
 * 16 million cells, 256 MB while reading. Placement itself wants far fewer (see CELL_BUDGET).
 */
export const MAX_AGGREGATE_CELLS = 16_000_000;

/** Sub-cells per cell side when measuring the study area and exclusions. */
export const COVER_SUBCELLS = 4;
/** A cell is feasible with valid data, and inside the allowed ground, on at least this share of it. */
export const FEASIBLE_SHARE = 0.5;

/** Forward lattice over a source image: fractional working-cell coordinates and pixel area at nodes. */
interface Lattice {
	step: number;
	nx: number;
	ny: number;
	gx: Float64Array;
	gy: Float64Array;
	area: Float64Array;
}

function buildLattice(W: number, H: number, step: number, exact: (u: number, v: number) => [number, number, number]): Lattice {
	const nx = Math.ceil(W / step) + 1;
	const ny = Math.ceil(H / step) + 1;
	const gx = new Float64Array(nx * ny);
	const gy = new Float64Array(nx * ny);
	const area = new Float64Array(nx * ny);
	for (let j = 0; j < ny; j++) {
		const v = Math.min(j * step, H);
		for (let i = 0; i < nx; i++) {
			const [x, y, a] = exact(Math.min(i * step, W), v);
			gx[j * nx + i] = x;
			gy[j * nx + i] = y;
			area[j * nx + i] = a;
		}
	}
	return { step, nx, ny, gx, gy, area };
}

/** Bilinear position of (u, v) on the lattice (for the error measure; the hot loop inlines it). */
function latticeAt(L: Lattice, W: number, H: number, u: number, v: number): [number, number] {
	const s = L.step;
	const i = Math.min(Math.floor(u / s), L.nx - 2);
	const j = Math.min(Math.floor(v / s), L.ny - 2);
	const u0 = i * s;
	const v0 = j * s;
	const fx = (u - u0) / (Math.min(u0 + s, W) - u0);
	const fy = (v - v0) / (Math.min(v0 + s, H) - v0);
	const k = j * L.nx + i;
	const lerp = (a: Float64Array) => (a[k] * (1 - fx) + a[k + 1] * fx) * (1 - fy) + (a[k + L.nx] * (1 - fx) + a[k + L.nx + 1] * fx) * fy;
	return [lerp(L.gx), lerp(L.gy)];
}

function latticeError(L: Lattice, W: number, H: number, exact: (u: number, v: number) => [number, number, number]): number {
	let worst = 0;
	const s = L.step;
	const every = Math.max(1, Math.floor(Math.max(L.nx, L.ny) / 64)); // at most ~64 × 64 probes
	for (let j = 0; j < L.ny - 1; j += every) {
		for (let i = 0; i < L.nx - 1; i += every) {
			const u = Math.min(i * s + s / 2, W);
			const v = Math.min(j * s + s / 2, H);
			const [ex, ey] = exact(u, v);
			if (!Number.isFinite(ex) || !Number.isFinite(ey)) continue;
			const [ix, iy] = latticeAt(L, W, H, u, v);
			const e = Math.hypot(ix - ex, iy - ey);
			if (!(e <= worst)) worst = e;
		}
	}
	return worst;
}

/** Ground lengths (working metres) of one pixel's two sides at image position (u, v). */
function pixelSides(t: GeoTransform, toWork: PointTransform, u: number, v: number): [number, number] {
	const p = (c: number, r: number) => toWork(...pixelToCrs(t, c, r));
	const o = p(u, v);
	const a = p(u + 1, v);
	const b = p(u, v + 1);
	return [Math.hypot(a[0] - o[0], a[1] - o[1]), Math.hypot(b[0] - o[0], b[1] - o[1])];
}

/** The working grid being filled: mass and valid area per cell. */
interface Accumulator {
	width: number;
	height: number;
	mass: Float64Array;
	validArea: Float32Array;
}

/** How the image's pixels map onto the grid: its size, sub-pixels per side, the lattice. */
interface Spread {
	W: number;
	H: number;
	ku: number;
	kv: number;
	lattice: Lattice;
	nodata: number | null;
}

/**
 * Adds one block's valid pixels to the grid, each split into ku × kv sub-pixels placed by the
 * lattice; returns the number of sub-pixels added. A plain function, kept out of the async
 * reading loop so that its numbers stay in registers (an async function's locals that live
 * across an await are boxed on the heap), and with nothing after its loop that the first block
 * has not run yet: such code would throw the optimised loop away at the end of every block.
 */
function accumulateBlock(block: RasterBlock, spread: Spread, target: Accumulator): number {
	const { W, H, ku, kv, lattice, nodata } = spread;
	const { width, height, mass, validArea } = target;
	const { nx, step, gx: LX, gy: LY, area: LA } = lattice;
	const rowX = new Float64Array(nx);
	const rowY = new Float64Array(nx);
	const rowA = new Float64Array(nx);
	// Running position and area of each sub-pixel column along a lattice span.
	const subX = new Float64Array(ku);
	const subY = new Float64Array(ku);
	const subA = new Float64Array(ku);
	const inv = 1 / (ku * kv);
	let added = 0;
	const data = block.data;
	const nd = nodata === null ? null : data instanceof Float32Array ? Math.fround(nodata) : nodata;
	for (let r = 0; r < block.height; r++) {
		const R = block.row0 + r;
		const off = r * W;
		for (let b = 0; b < kv; b++) {
			const v = R + (b + 0.5) / kv;
			// Interpolate the lattice's node rows at v.
			const j = Math.min(Math.floor(v / step), lattice.ny - 2);
			const v0 = j * step;
			const fy = (v - v0) / (Math.min(v0 + step, H) - v0);
			const base = j * nx;
			for (let i = 0; i < nx; i++) {
				rowX[i] = LX[base + i] + (LX[base + nx + i] - LX[base + i]) * fy;
				rowY[i] = LY[base + i] + (LY[base + nx + i] - LY[base + i]) * fy;
				rowA[i] = LA[base + i] + (LA[base + nx + i] - LA[base + i]) * fy;
			}
			// Along a lattice span, positions and areas change linearly: step them by increments.
			for (let i = 0; i < nx - 1; i++) {
				const c0 = i * step;
				if (c0 >= W) break;
				const c1 = Math.min(c0 + step, W);
				const len = c1 - c0;
				const dX = (rowX[i + 1] - rowX[i]) / len;
				const dY = (rowY[i + 1] - rowY[i]) / len;
				const dA = ((rowA[i + 1] - rowA[i]) / len) * inv;
				for (let sub = 0; sub < ku; sub++) {
					const frac = (sub + 0.5) / ku;
					subX[sub] = rowX[i] + dX * frac;
					subY[sub] = rowY[i] + dY * frac;
					subA[sub] = rowA[i] * inv + dA * frac;
				}
				for (let c = c0; c < c1; c++) {
					const value = data[off + c];
					// Valid: a number, finite, not negative, not the nodata value.
					if (value >= 0 && value < Infinity && value !== nd) {
						for (let sub = 0; sub < ku; sub++) {
							const px = subX[sub];
							const py = subY[sub];
							if (px >= 0 && px < width && py >= 0 && py < height) {
								const at = (py | 0) * width + (px | 0);
								const pa = subA[sub];
								mass[at] += value * pa;
								validArea[at] += pa;
								added++;
							}
						}
					}
					for (let sub = 0; sub < ku; sub++) {
						subX[sub] += dX;
						subY[sub] += dY;
						subA[sub] += dA;
					}
				}
			}
		}
	}
	return added;
}

/** Ingest one band into a working grid: the single pass over the raster described above. */
export async function aggregateToWorkingGrid(source: GeoTiffSource, opts: AggregateOptions = {}): Promise<AggregateResult> {
	let choice: CellSizeChoice | null = null;
	const frame = planFrame(source, { ...opts, maxCells: opts.maxCells ?? MAX_AGGREGATE_CELLS }, (pixelM, w, h) => {
		choice = chooseCellSize({ pixelSize: pixelM, extentWidth: w, extentHeight: h, smallestRadius: opts.smallestRadius, budget: opts.cellBudget, requested: opts.cellSize });
		return choice.cellSize;
	});
	const cellChoice = choice as unknown as CellSizeChoice;
	const { geom, toWork, epsg } = frame;
	const { width, height, x0, y0, cellSize } = geom;

	// The coarsest image with pixels of at most half a cell.
	let image = { index: 0, width: source.width, height: source.height, transform: source.transform };
	if (opts.useOverviews ?? true) {
		for (const ov of source.overviews) {
			const [a, b] = pixelSides(ov.transform, toWork, ov.width / 2, ov.height / 2);
			if (Math.max(a, b) <= cellSize / 2) image = ov;
		}
	}
	const W = image.width;
	const H = image.height;
	const t = image.transform;
	const [sideU, sideV] = pixelSides(t, toWork, W / 2, H / 2);
	const split = (side: number) => Math.min(4, Math.max(1, Math.ceil((2 * side) / cellSize - 1e-9)));
	const ku = split(sideU);
	const kv = split(sideV);

	// Exact map of image position (u, v) to fractional cell coordinates and the pixel's area (m²).
	const exact = (u: number, v: number): [number, number, number] => {
		const at = (c: number, r: number) => toWork(...pixelToCrs(t, c, r));
		const o = at(u, v);
		const du = at(u + 0.5, v);
		const du0 = at(u - 0.5, v);
		const dv = at(u, v + 0.5);
		const dv0 = at(u, v - 0.5);
		const area = Math.abs((du[0] - du0[0]) * (dv[1] - dv0[1]) - (du[1] - du0[1]) * (dv[0] - dv0[0]));
		return [(o[0] - x0) / cellSize, (y0 - o[1]) / cellSize, area];
	};
	const maxErr = opts.maxLatticeError ?? 0.02;
	let step = 64;
	let lattice = buildLattice(W, H, step, exact);
	let err = latticeError(lattice, W, H, exact);
	while (step > 4 && !(err <= maxErr)) {
		step /= 2;
		lattice = buildLattice(W, H, step, exact);
		err = latticeError(lattice, W, H, exact);
	}

	const n = width * height;
	const target: Accumulator = { width, height, mass: new Float64Array(n), validArea: new Float32Array(n) };
	const spread: Spread = { W, H, ku, kv, lattice, nodata: source.nodata };
	let pixelsRead = 0;
	let validPixels = 0;
	const readOpts: BlockReadOptions = { image: image.index, pool: opts.pool ?? null };
	for await (const block of source.blocks(readOpts)) {
		opts.onBlock?.(block, image.index);
		pixelsRead += block.width * block.height;
		validPixels += accumulateBlock(block, spread, target);
	}
	const { mass, validArea } = target;

	if (validPixels === 0) throw noValidCells();
	const allowed = allowedShare(geom, frame.studyPolygons, frame.exclusionPolygons);
	const feasible = new Uint8Array(n);
	const cellArea = cellSize * cellSize;
	let total = 0;
	for (let i = 0; i < n; i++) {
		const share = allowed ? allowed[i] : 1;
		if (share < 1) mass[i] *= share;
		if (validArea[i] >= FEASIBLE_SHARE * cellArea && share >= FEASIBLE_SHARE) feasible[i] = 1;
		total += mass[i];
	}
	if (!Number.isFinite(total)) throw new WorkingGridError('the raster values sum to infinity');
	if (total > 0) for (let i = 0; i < n; i++) mass[i] /= total;

	return {
		grid: { crs: crsLabel(epsg), width, height, x0, y0, cellSize, mass, feasible },
		epsg,
		cellSize: cellChoice,
		image: { index: image.index, width: W, height: H },
		integral: total,
		validArea,
		subsamples: Math.max(ku, kv),
		subsamplesUV: [ku, kv],
		latticeStep: step,
		latticeError: err,
		pixelsRead
	};
}

/**
 * A band held in memory (an importance surface) as a source of one block, so that it goes through
 * the same aggregation as a streamed GeoTIFF (placement runs and zone shares use it).
 */
export function bandSource(band: RasterBand): GeoTiffSource {
	const { data, ...header } = band;
	return {
		...header,
		blockWidth: band.width,
		blockHeight: band.height,
		overviews: [],
		async *blocks() {
			yield { row0: 0, width: band.width, height: band.height, data };
		},
		async close() {}
	};
}

/**
 * Share of each cell inside the study area (when there is one) and outside every exclusion,
 * counted on COVER_SUBCELLS² sub-cells a cell, in strips of 64 cell rows; null when neither is given.
 */
export function allowedShare(geom: GridGeometry, study: Ring[][] | null, exclusions: Ring[][]): Float32Array | null {
	if (!study && exclusions.length === 0) return null;
	const q = COVER_SUBCELLS;
	const { width, height, x0, y0, cellSize } = geom;
	const out = new Float32Array(width * height);
	const stripRows = 64;
	for (let r0 = 0; r0 < height; r0 += stripRows) {
		const rows = Math.min(stripRows, height - r0);
		const fine: GridGeometry = { width: width * q, height: rows * q, x0, y0: y0 - r0 * cellSize, cellSize: cellSize / q };
		const m = fine.width * fine.height;
		let ok: Uint8Array;
		if (study) {
			ok = new Uint8Array(m);
			for (const polygon of study) {
				const part = rasterizeRings(fine, polygon);
				for (let i = 0; i < m; i++) ok[i] |= part[i];
			}
		} else ok = new Uint8Array(m).fill(1);
		for (const polygon of exclusions) {
			const part = rasterizeRings(fine, polygon);
			for (let i = 0; i < m; i++) if (part[i]) ok[i] = 0;
		}
		for (let fr = 0; fr < rows * q; fr++) {
			const cellRow = r0 + ((fr / q) | 0);
			for (let fc = 0; fc < width * q; fc++) if (ok[fr * fine.width + fc]) out[cellRow * width + ((fc / q) | 0)] += 1;
		}
	}
	const inv = 1 / (q * q);
	for (let i = 0; i < out.length; i++) out[i] *= inv;
	return out;
}

export interface BlockAverage {
	width: number;
	height: number;
	/** The coarse grid's geo-transform (the source's, with `factor` times larger cells). */
	transform: GeoTransform;
	/** Mean of the valid source pixels of each coarse cell; NaN where there are none. */
	data: Float64Array;
	factor: number;
}

/**
 * A band averaged over `factor` × `factor` blocks of pixels in its own CRS, streamed block row by
 * block row: nodata, NaN and ±∞ are left out of each mean. Memory: 16 bytes a coarse cell.
 */
export async function blockAverage(source: GeoTiffSource, factor: number, opts: { pool?: DecoderPool | null } = {}): Promise<BlockAverage> {
	if (!Number.isInteger(factor) || factor < 1) throw new RangeError(`factor must be a positive whole number, not ${factor}`);
	const W = source.width;
	const width = Math.ceil(W / factor);
	const height = Math.ceil(source.height / factor);
	const sum = new Float64Array(width * height);
	const count = new Float64Array(width * height);
	for await (const block of source.blocks({ pool: opts.pool ?? null })) {
		const data = block.data;
		const nd = source.nodata === null ? null : data instanceof Float32Array ? Math.fround(source.nodata) : source.nodata;
		for (let r = 0; r < block.height; r++) {
			const base = (((block.row0 + r) / factor) | 0) * width;
			for (let c = 0; c < W; c++) {
				const v = data[r * W + c];
				if (!Number.isFinite(v) || v === nd) continue;
				const k = base + ((c / factor) | 0);
				sum[k] += v;
				count[k]++;
			}
		}
	}
	for (let k = 0; k < sum.length; k++) sum[k] = count[k] > 0 ? sum[k] / count[k] : Number.NaN;
	const t = source.transform;
	return { width, height, transform: [t[0], t[1] * factor, t[2] * factor, t[3], t[4] * factor, t[5] * factor], data: sum, factor };
}
