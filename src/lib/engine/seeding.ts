import { mulberry32 } from './prng';

/**
 * Weighted k-means++ seeding on the cell centres (grid units). The first seed is drawn with
 * probability φ; each next one with probability φ·D² (D = distance to the nearest seed so
 * far). Only feasible cells are drawn. When the remaining weight is zero (fewer massive
 * cells than seeds), the draw falls back to D² alone over feasible cells, so k distinct
 * cells are always returned if k feasible cells exist (place() validates that).
 * Deterministic for a given seed: the PRNG is mulberry32. O(k × cells).
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
	const d2 = new Float64Array(cells).fill(Infinity);
	const u = new Float64Array(k);
	const v = new Float64Array(k);
	for (let s = 0; s < k; s++) {
		let chosen = draw(random, cells, (idx) => (feasible[idx] ? mass[idx] * (s === 0 ? 1 : d2[idx]) : 0));
		if (chosen < 0) chosen = draw(random, cells, (idx) => (feasible[idx] ? (s === 0 ? 1 : d2[idx]) : 0));
		if (chosen < 0) throw new Error('kMeansPlusPlusSeeds: fewer feasible cells than seeds');
		const cu = (chosen % width) + 0.5;
		const cv = Math.floor(chosen / width) + 0.5;
		u[s] = cu;
		v[s] = cv;
		for (let r = 0; r < height; r++) {
			const dv = r + 0.5 - cv;
			const o = r * width;
			for (let c = 0; c < width; c++) {
				const du = c + 0.5 - cu;
				const dd = du * du + dv * dv;
				if (dd < d2[o + c]) d2[o + c] = dd;
			}
		}
	}
	return { u, v };
}

/** Draws an index with probability proportional to weight(idx); -1 if all weights are 0. */
function draw(random: () => number, cells: number, weight: (idx: number) => number): number {
	let total = 0;
	for (let idx = 0; idx < cells; idx++) total += weight(idx);
	if (!(total > 0)) return -1;
	const target = random() * total;
	let acc = 0;
	let last = -1;
	for (let idx = 0; idx < cells; idx++) {
		const w = weight(idx);
		if (w <= 0) continue;
		acc += w;
		last = idx;
		if (acc > target) return idx;
	}
	return last;
}
