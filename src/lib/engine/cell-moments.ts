import type { RowPrefixSums } from './prefix-sums';
import { columnEndAtOrBefore, columnEndBefore, firstColumnAtOrAfter, polygonRowSpans } from './row-spans';
import { voronoiCells } from './voronoi-cells';

/**
 * Mass moments of every sensor's Voronoi cell, in grid units (see grid-frame.ts).
 * Full cell: mass, Σu·φ, Σv·φ and the cost term Σφ·‖q − p‖² about the sensor.
 * Cell ∩ disk of radius rho[i] around the sensor (closed disk): mass, Σu·φ, Σv·φ.
 */
export interface CellMoments {
	mass: Float64Array;
	su: Float64Array;
	sv: Float64Array;
	cost: Float64Array;
	diskMass: Float64Array;
	diskSu: Float64Array;
	diskSv: Float64Array;
}

/** Reusable per-row buffers, so an iteration allocates nothing of size height per sensor. */
export interface RowScratch {
	lo: Float64Array;
	hi: Float64Array;
}

export function rowScratch(height: number): RowScratch {
	return { lo: new Float64Array(height), hi: new Float64Array(height) };
}

/**
 * Integrates φ over each sensor's Voronoi cell row by row with the prefix sums:
 * O(rows crossed) per sensor, independent of the cells' area.
 * rho = null skips the disk part (diskMass etc. are then zero).
 */
export function cellMoments(
	prefix: RowPrefixSums,
	pu: Float64Array,
	pv: Float64Array,
	rho: Float64Array | null,
	scratch: RowScratch = rowScratch(prefix.height)
): CellMoments {
	const n = pu.length;
	const out: CellMoments = {
		mass: new Float64Array(n),
		su: new Float64Array(n),
		sv: new Float64Array(n),
		cost: new Float64Array(n),
		diskMass: new Float64Array(n),
		diskSu: new Float64Array(n),
		diskSv: new Float64Array(n)
	};
	if (n === 0) return out;
	const cells = voronoiCells(pu, pv, prefix.width, prefix.height);
	for (let i = 0; i < n; i++) {
		const ring = cells[i];
		if (ring) integrateCell(prefix, ring, i, pu[i], pv[i], rho ? rho[i] : -1, scratch, out);
	}
	return out;
}

function integrateCell(
	prefix: RowPrefixSums,
	ring: ArrayLike<number>,
	i: number,
	px: number,
	py: number,
	radius: number,
	scratch: RowScratch,
	out: CellMoments
): void {
	const { width, sums } = prefix;
	const stride = width + 1;
	const { lo, hi } = scratch;
	const { rowStart, rowEnd } = polygonRowSpans(ring, prefix.height, lo, hi);
	const r2 = radius * radius;
	let mass = 0;
	let su = 0;
	let sv = 0;
	let cost = 0;
	let dMass = 0;
	let dSu = 0;
	let dSv = 0;
	for (let r = rowStart; r < rowEnd; r++) {
		const left = lo[r];
		const right = hi[r];
		if (!(right > left)) continue;
		// `| 0` keeps the indices small integers (typed-array reads with double indices are slow).
		const c0 = Math.max(0, firstColumnAtOrAfter(left)) | 0;
		const c1 = Math.min(width, columnEndBefore(right)) | 0;
		if (c1 <= c0) continue;
		const o = (r * stride) | 0;
		const e0 = (3 * (o + c0)) | 0;
		const e1 = (3 * (o + c1)) | 0;
		const m = sums[e1] - sums[e0];
		if (m === 0) continue;
		const s1 = sums[e1 + 1] - sums[e0 + 1];
		const s2 = sums[e1 + 2] - sums[e0 + 2];
		const v = r + 0.5;
		const dv = v - py;
		mass += m;
		su += s1;
		sv += v * m;
		cost += s2 - 2 * px * s1 + px * px * m + m * dv * dv;
		if (radius > 0 && dv * dv <= r2) {
			const h = Math.sqrt(r2 - dv * dv);
			const d0 = Math.max(c0, firstColumnAtOrAfter(px - h)) | 0;
			const d1 = Math.min(c1, columnEndAtOrBefore(px + h)) | 0;
			if (d0 === c0 && d1 === c1) {
				// The disk covers the whole span: same sums, no second read.
				dMass += m;
				dSu += s1;
				dSv += v * m;
			} else if (d1 > d0) {
				const f0 = (3 * (o + d0)) | 0;
				const f1 = (3 * (o + d1)) | 0;
				const dm = sums[f1] - sums[f0];
				dMass += dm;
				dSu += sums[f1 + 1] - sums[f0 + 1];
				dSv += v * dm;
			}
		}
	}
	out.mass[i] = mass;
	out.su[i] = su;
	out.sv[i] = sv;
	out.cost[i] = cost > 0 ? cost : 0;
	out.diskMass[i] = dMass;
	out.diskSu[i] = dSu;
	out.diskSv[i] = dSv;
}

/**
 * The cost term and the disk mass of every sensor's Voronoi cell: cellMoments' `cost` and
 * `diskMass`, with the same cells (half-open spans, closed disks, the same column rules), summed
 * cell by cell over the owned runs instead of read from prefix sums. O(cells) and no 24-bytes-a-cell
 * table: the cheaper way when the moments are wanted once (a run of 0 iterations), not per iteration.
 */
export function cellCostAndCoverage(
	mass: Float64Array,
	width: number,
	height: number,
	pu: Float64Array,
	pv: Float64Array,
	rho: Float64Array
): { cost: Float64Array; diskMass: Float64Array } {
	const n = pu.length;
	const cost = new Float64Array(n);
	const diskMass = new Float64Array(n);
	forEachOwnedRun(width, height, pu, pv, (r, c0, c1, i) => {
		const px = pu[i];
		const dv = r + 0.5 - pv[i];
		const o = r * width;
		let sum = 0;
		for (let c = c0; c < c1; c++) {
			const du = c + 0.5 - px;
			sum += mass[o + c] * (du * du + dv * dv);
		}
		cost[i] += sum;
		const r2 = rho[i] * rho[i];
		if (rho[i] > 0 && dv * dv <= r2) {
			const h = Math.sqrt(r2 - dv * dv);
			const d0 = Math.max(c0, firstColumnAtOrAfter(px - h));
			const d1 = Math.min(c1, columnEndAtOrBefore(px + h));
			let disk = 0;
			for (let c = d0; c < d1; c++) disk += mass[o + c];
			diskMass[i] += disk;
		}
	});
	return { cost, diskMass };
}

/**
 * Visits every raster cell once with the sensor whose Voronoi cell owns it
 * (same half-open rule as cellMoments). Used for the final distance percentile.
 * visit(row, c0, c1, sensor) covers columns [c0, c1) of that row.
 */
export function forEachOwnedRun(
	width: number,
	height: number,
	pu: Float64Array,
	pv: Float64Array,
	visit: (row: number, c0: number, c1: number, sensor: number) => void
): void {
	const n = pu.length;
	if (n === 0) return;
	const cells = voronoiCells(pu, pv, width, height);
	const { lo, hi } = rowScratch(height);
	for (let i = 0; i < n; i++) {
		const ring = cells[i];
		if (!ring) continue;
		const { rowStart, rowEnd } = polygonRowSpans(ring, height, lo, hi);
		for (let r = rowStart; r < rowEnd; r++) {
			if (!(hi[r] > lo[r])) continue;
			const c0 = Math.max(0, firstColumnAtOrAfter(lo[r]));
			const c1 = Math.min(width, columnEndBefore(hi[r]));
			if (c1 > c0) visit(r, c0, c1, i);
		}
	}
}
