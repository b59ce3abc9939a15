import { mulberry32 } from './prng';

/**
 * Weighted k-means++ seeding on the cell centres (grid units). The first seed is drawn with
 * probability ∝ φ; each next one with probability ∝ φ·D² (D = distance to the nearest seed so
 * far). Only feasible cells are drawn. When no weight is left (fewer cells with mass than
 * seeds, or no mass at all), the draw falls back to D² alone over feasible cells, so k
 * distinct cells are returned whenever k feasible cells exist (place() validates that).
 * Deterministic for a given seed (mulberry32).
 *
 * Cost: after a new seed only cells that can get closer are revisited: a row is skipped when
 * its largest D² is below the row's squared distance to the seed, and within a row only the
 * columns inside that radius are updated; per-row weight sums make each draw O(rows + width).
 * About O(cells) per seed for the first few seeds, shrinking to O(cells / k) later.
 * Memory: D² for every cell (8 bytes a cell), allocated only when there is a second seed to draw.
 */
export function kMeansPlusPlusSeeds(
	mass: Float64Array,
	feasible: Uint8Array,
	width: number,
	height: number,
	k: number,
	seed: number
): { u: Float64Array; v: Float64Array } {
	const cells = width * height;
	const random = mulberry32(seed);
	let anyMass = false;
	for (let idx = 0; idx < cells && !anyMass; idx++) if (feasible[idx] && mass[idx] > 0) anyMass = true;
	// Without mass, every feasible cell weighs 1 (the fallback below).
	let fallback = !anyMass;
	const base = (idx: number) => (feasible[idx] ? (fallback ? 1 : mass[idx] > 0 ? mass[idx] : 0) : 0);
	// D² to the nearest seed so far; Infinity everywhere until the first seed.
	let d2: Float64Array | null = null;
	const rowMax = new Float64Array(height).fill(Infinity);
	const rowWeight = new Float64Array(height);
	const u = new Float64Array(k);
	const v = new Float64Array(k);

	// Weight of a cell: base (first seed) or base·D².
	const weight = (idx: number, first: boolean) => {
		const b = base(idx);
		return first ? b : b > 0 ? b * d2![idx] : 0;
	};
	const sumRow = (r: number, first: boolean) => {
		let w = 0;
		let m = d2 ? 0 : Infinity;
		const o = r * width;
		for (let c = 0; c < width; c++) {
			w += weight(o + c, first);
			if (d2 && d2[o + c] > m) m = d2[o + c];
		}
		rowWeight[r] = w;
		rowMax[r] = m;
	};
	for (let r = 0; r < height; r++) sumRow(r, true);

	for (let s = 0; s < k; s++) {
		let chosen = drawCell(random, rowWeight, width, height, (idx) => weight(idx, s === 0));
		if (chosen < 0 && !fallback) {
			// No weight left: fall back to D² over feasible cells.
			fallback = true;
			for (let r = 0; r < height; r++) sumRow(r, s === 0);
			chosen = drawCell(random, rowWeight, width, height, (idx) => weight(idx, s === 0));
		}
		if (chosen < 0) throw new Error('kMeansPlusPlusSeeds: fewer feasible cells than seeds');
		const cu = (chosen % width) + 0.5;
		const cv = Math.floor(chosen / width) + 0.5;
		u[s] = cu;
		v[s] = cv;
		if (s === k - 1) break; // the last seed: D² is not needed any more
		d2 ??= new Float64Array(cells).fill(Infinity);
		for (let r = 0; r < height; r++) {
			const dv = r + 0.5 - cv;
			const dv2 = dv * dv;
			if (!(dv2 < rowMax[r])) continue;
			const reach = rowMax[r] === Infinity ? width : Math.sqrt(rowMax[r] - dv2);
			const c0 = Math.max(0, Math.floor(cu - 0.5 - reach));
			const c1 = Math.min(width, Math.ceil(cu - 0.5 + reach) + 1);
			const o = r * width;
			for (let c = c0; c < c1; c++) {
				const du = c + 0.5 - cu;
				const dd = du * du + dv2;
				if (dd < d2[o + c]) d2[o + c] = dd;
			}
			sumRow(r, false);
		}
	}
	return { u, v };
}

/** Draws a cell with probability ∝ weight using the per-row sums; -1 if all are 0. */
function drawCell(
	random: () => number,
	rowWeight: Float64Array,
	width: number,
	height: number,
	weight: (idx: number) => number
): number {
	let total = 0;
	for (let r = 0; r < height; r++) total += rowWeight[r];
	if (!(total > 0)) return -1;
	const target = random() * total;
	let acc = 0;
	let row = -1;
	for (let r = 0; r < height; r++) {
		if (rowWeight[r] <= 0) continue;
		row = r;
		if (acc + rowWeight[r] > target) break;
		acc += rowWeight[r];
	}
	const o = row * width;
	let last = -1;
	for (let c = 0; c < width; c++) {
		const w = weight(o + c);
		if (w <= 0) continue;
		acc += w;
		last = o + c;
		if (acc > target) return o + c;
	}
	return last;
}
