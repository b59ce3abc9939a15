/**
 * Nearest-neighbour resampling of a band onto a grid in another CRS (e.g. a geographic moisture
 * product onto the network's UTM working grid).
 *
 * Exact reprojection of every cell centre costs one proj4 call per cell. Instead the target
 * centres are transformed exactly at control points every `step` cells (and on the last row and
 * column), and source coordinates in between are interpolated bilinearly. Over a span of 16
 * cells the map projections used here are smooth enough that the interpolation error stays far
 * below one source cell (checked in the tests against per-cell reprojection); cells whose nearest
 * source cell is ambiguous within that error may pick the neighbour, as any resampling would.
 * Same-CRS grids go straight to alignToGrid.
 */
import { transformer } from '../../geo/crs';
import { alignToGrid } from '../../importance/align';
import { isValidValue, type GridBand, type GridSpec } from '../../importance/grid';

export interface ReprojectOptions {
	/** Control-point spacing in target cells; default 16, 1 = reproject every cell exactly. */
	step?: number;
}

export function reprojectToGrid(band: GridBand, target: GridSpec, opts: ReprojectOptions = {}): GridBand {
	const src = band.grid;
	if (src.epsg === target.epsg) return alignToGrid(band, target);
	const step = opts.step ?? 16;
	if (!Number.isInteger(step) || step < 1) throw new RangeError(`step must be a positive integer, not ${step}`);
	const toSource = transformer(target.epsg, src.epsg).forward;
	const W = target.width;
	const H = target.height;
	// Control columns/rows: 0, step, 2·step, …, and always the last one.
	const ctrl = (n: number) => {
		const out: number[] = [];
		for (let k = 0; k < n - 1; k += step) out.push(k);
		out.push(n - 1);
		return [...new Set(out)];
	};
	const cc = ctrl(W);
	const cr = ctrl(H);
	const cx = new Float64Array(cc.length * cr.length);
	const cy = new Float64Array(cc.length * cr.length);
	for (let j = 0; j < cr.length; j++) {
		for (let i = 0; i < cc.length; i++) {
			const [x, y] = toSource(target.x0 + (cc[i] + 0.5) * target.dx, target.y0 - (cr[j] + 0.5) * target.dy);
			cx[j * cc.length + i] = x;
			cy[j * cc.length + i] = y;
		}
	}
	const out = new Float64Array(W * H);
	let j = 0;
	for (let r = 0; r < H; r++) {
		while (j < cr.length - 2 && cr[j + 1] <= r) j++;
		const r0 = cr[j];
		const r1 = cr[Math.min(j + 1, cr.length - 1)];
		const fy = r1 > r0 ? (r - r0) / (r1 - r0) : 0;
		let i = 0;
		for (let c = 0; c < W; c++) {
			while (i < cc.length - 2 && cc[i + 1] <= c) i++;
			const c0 = cc[i];
			const c1 = cc[Math.min(i + 1, cc.length - 1)];
			const fx = c1 > c0 ? (c - c0) / (c1 - c0) : 0;
			const a = j * cc.length + i;
			const b = j * cc.length + Math.min(i + 1, cc.length - 1);
			const d = Math.min(j + 1, cr.length - 1) * cc.length + i;
			const e = Math.min(j + 1, cr.length - 1) * cc.length + Math.min(i + 1, cc.length - 1);
			const x = (cx[a] * (1 - fx) + cx[b] * fx) * (1 - fy) + (cx[d] * (1 - fx) + cx[e] * fx) * fy;
			const y = (cy[a] * (1 - fx) + cy[b] * fx) * (1 - fy) + (cy[d] * (1 - fx) + cy[e] * fx) * fy;
			const sc = Math.floor((x - src.x0) / src.dx);
			const sr = Math.floor((src.y0 - y) / src.dy);
			const k = r * W + c;
			if (!Number.isFinite(x) || !Number.isFinite(y) || sc < 0 || sc >= src.width || sr < 0 || sr >= src.height) {
				out[k] = NaN;
				continue;
			}
			const v = band.data[sr * src.width + sc];
			out[k] = isValidValue(v, band.nodata) ? v : NaN;
		}
	}
	return { grid: { ...target }, data: out, nodata: null };
}
