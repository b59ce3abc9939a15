/**
 * Rasters on the map's grid: a surface resampled (nearest neighbour) onto an axis-aligned grid of
 * the network's working CRS, its bounds and value range, gaps filled for contouring, and a
 * box-averaged coarser copy. Pure functions on Float64Array values (NaN = no value), no I/O.
 */
import { transformer } from '../geo/crs';
import { boundsOf, type Bounds, type Position } from '../geo/geometry';
import type { GridSpec } from '../importance/grid';

/** A raster that cannot be put on the map, with a message fit for the user. */
export class MapRasterError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'MapRasterError';
	}
}

/** A raster resampled onto an axis-aligned grid of the map CRS (row 0 north). */
export interface MapRaster {
	x0: number;
	y0: number;
	dx: number;
	dy: number;
	width: number;
	height: number;
	/** NaN where there is no value. */
	values: Float64Array;
}

/** A surface as the importance code produces it (see src/lib/importance/grid.ts). */
export interface SurfaceLike {
	grid: GridSpec;
	data: ArrayLike<number>;
}

/**
 * Nearest-neighbour resampling of a surface onto a grid of the map CRS, at most `maxSize` cells on
 * the longer side (never finer than the source). Same CRS: a box of source cells per output cell,
 * no reprojection. Another CRS: the surface's outline (16 points a side) gives the output bounds,
 * and each output cell centre is transformed back into the source CRS and looked up.
 */
export function resampleToMap(surface: SurfaceLike, mapEpsg: number, maxSize = 512): MapRaster {
	const g = surface.grid;
	if (!(g.width > 0 && g.height > 0 && g.dx > 0 && g.dy > 0)) throw new MapRasterError('the importance grid is empty');
	if (surface.data.length !== g.width * g.height) throw new MapRasterError(`the importance grid holds ${surface.data.length} values, not ${g.width}×${g.height}`);
	if (!Number.isInteger(maxSize) || maxSize < 2) throw new RangeError(`maxSize must be an integer ≥ 2, not ${maxSize}`);
	const at = (c: number, r: number) => {
		const v = Number(surface.data[r * g.width + c]);
		return Number.isFinite(v) ? v : NaN;
	};
	if (g.epsg === mapEpsg) {
		const scale = Math.min(1, maxSize / Math.max(g.width, g.height));
		const width = Math.max(1, Math.round(g.width * scale));
		const height = Math.max(1, Math.round(g.height * scale));
		const dx = (g.width * g.dx) / width;
		const dy = (g.height * g.dy) / height;
		const values = new Float64Array(width * height);
		for (let r = 0; r < height; r++) {
			const sr = Math.min(g.height - 1, Math.floor(((r + 0.5) * g.height) / height));
			for (let c = 0; c < width; c++) {
				const sc = Math.min(g.width - 1, Math.floor(((c + 0.5) * g.width) / width));
				values[r * width + c] = at(sc, sr);
			}
		}
		return { x0: g.x0, y0: g.y0, dx, dy, width, height, values };
	}
	const t = transformer(g.epsg, mapEpsg);
	const outline: Position[] = [];
	const n = 16;
	for (let k = 0; k <= n; k++) {
		const f = k / n;
		const W = g.width * g.dx;
		const H = g.height * g.dy;
		outline.push(t.forward(g.x0 + f * W, g.y0), t.forward(g.x0 + f * W, g.y0 - H), t.forward(g.x0, g.y0 - f * H), t.forward(g.x0 + W, g.y0 - f * H));
	}
	const b = boundsOf(outline);
	if (!b) throw new MapRasterError(`the importance grid cannot be shown in EPSG:${mapEpsg}`);
	const spanX = b[2] - b[0];
	const spanY = b[3] - b[1];
	const longer = Math.max(spanX, spanY);
	// Never finer than the source's cell count along the longer side.
	const size = Math.min(maxSize, Math.max(g.width, g.height));
	const cell = longer / size;
	const width = Math.max(1, Math.round(spanX / cell));
	const height = Math.max(1, Math.round(spanY / cell));
	const dx = spanX / width;
	const dy = spanY / height;
	const values = new Float64Array(width * height);
	for (let r = 0; r < height; r++) {
		const y = b[3] - (r + 0.5) * dy;
		for (let c = 0; c < width; c++) {
			const [sx, sy] = t.inverse(b[0] + (c + 0.5) * dx, y);
			const sc = Math.floor((sx - g.x0) / g.dx);
			const sr = Math.floor((g.y0 - sy) / g.dy);
			values[r * width + c] = sc >= 0 && sc < g.width && sr >= 0 && sr < g.height ? at(sc, sr) : NaN;
		}
	}
	return { x0: b[0], y0: b[3], dx, dy, width, height, values };
}

export function rasterBounds(r: MapRaster): Bounds {
	return [r.x0, r.y0 - r.height * r.dy, r.x0 + r.width * r.dx, r.y0];
}

/** Smallest and largest finite value; null when the raster has none. */
export function valueRange(values: ArrayLike<number>): { min: number; max: number } | null {
	let min = Infinity;
	let max = -Infinity;
	for (let i = 0; i < values.length; i++) {
		const v = values[i];
		if (!Number.isFinite(v)) continue;
		if (v < min) min = v;
		if (v > max) max = v;
	}
	return min <= max ? { min, max } : null;
}

/**
 * The raster with every cell that has no value filled from its valued neighbours (repeated
 * 8-neighbour means, growing inward from the data), so contouring does not draw a false line
 * around each hole; null when no cell has a value.
 */
export function fillGaps(r: MapRaster): Float64Array | null {
	const { width: w, height: h } = r;
	let cur = Float64Array.from(r.values);
	if (!cur.some((v) => Number.isFinite(v))) return null;
	for (let pass = 0; pass < w + h; pass++) {
		let missing = 0;
		const next = Float64Array.from(cur);
		for (let j = 0; j < h; j++) {
			for (let i = 0; i < w; i++) {
				if (Number.isFinite(cur[j * w + i])) continue;
				let sum = 0;
				let n = 0;
				for (let dj = -1; dj <= 1; dj++) {
					for (let di = -1; di <= 1; di++) {
						const jj = j + dj;
						const ii = i + di;
						if ((di || dj) && jj >= 0 && jj < h && ii >= 0 && ii < w && Number.isFinite(cur[jj * w + ii])) {
							sum += cur[jj * w + ii];
							n++;
						}
					}
				}
				if (n > 0) next[j * w + i] = sum / n;
				else missing++;
			}
		}
		cur = next;
		if (missing === 0) break;
	}
	return cur;
}

/** A copy of the raster box-averaged so that its longer side has at most `maxSize` cells. */
export function coarsen(r: MapRaster, maxSize: number): MapRaster {
	const f = Math.ceil(Math.max(r.width, r.height) / maxSize);
	if (f <= 1) return { ...r, values: Float64Array.from(r.values) };
	const width = Math.ceil(r.width / f);
	const height = Math.ceil(r.height / f);
	const values = new Float64Array(width * height);
	for (let j = 0; j < height; j++) {
		for (let i = 0; i < width; i++) {
			let sum = 0;
			let n = 0;
			for (let rr = j * f; rr < Math.min(r.height, (j + 1) * f); rr++) {
				for (let cc = i * f; cc < Math.min(r.width, (i + 1) * f); cc++) {
					const v = r.values[rr * r.width + cc];
					if (Number.isFinite(v)) {
						sum += v;
						n++;
					}
				}
			}
			values[j * width + i] = n > 0 ? sum / n : NaN;
		}
	}
	// Cells of the coarse grid cover f source cells (the last row/column may reach past the edge).
	return { x0: r.x0, y0: r.y0, dx: r.dx * f, dy: r.dy * f, width, height, values };
}
