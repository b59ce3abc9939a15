import { forEachOwnedRun } from './cell-moments';

/**
 * Mass-weighted quantile of the distance from each cell centre to its nearest sensor
 * (grid units): the smallest distance d with Σ{φ : dist ≤ d} ≥ q·Σφ.
 * One nearest-sensor pass over the Voronoi row spans (O(cells)), then a 4096-bin histogram
 * locates the quantile's bin and only that bin's cells are sorted, so the answer is exact
 * without sorting every cell. Run once, on the final state (not per iteration).
 */
export function weightedDistanceQuantile(
	mass: Float64Array,
	width: number,
	height: number,
	pu: Float64Array,
	pv: Float64Array,
	q: number
): number {
	const cells = width * height;
	const dist = new Float64Array(cells);
	let total = 0;
	let maxD = 0;
	forEachOwnedRun(width, height, pu, pv, (r, c0, c1, i) => {
		const dv = r + 0.5 - pv[i];
		for (let c = c0; c < c1; c++) {
			const du = c + 0.5 - pu[i];
			const d = Math.sqrt(du * du + dv * dv);
			dist[r * width + c] = d;
			const m = mass[r * width + c];
			if (m > 0) {
				total += m;
				if (d > maxD) maxD = d;
			}
		}
	});
	if (!(total > 0)) return 0;
	const bins = 4096;
	const hist = new Float64Array(bins);
	const scale = maxD > 0 ? (bins - 1) / maxD : 0;
	for (let k = 0; k < cells; k++) if (mass[k] > 0) hist[Math.floor(dist[k] * scale)] += mass[k];
	const want = q * total;
	let acc = 0;
	let bin = 0;
	for (; bin < bins; bin++) {
		if (acc + hist[bin] >= want) break;
		acc += hist[bin];
	}
	if (bin >= bins) bin = bins - 1;
	const inBin: number[] = [];
	for (let k = 0; k < cells; k++) if (mass[k] > 0 && Math.floor(dist[k] * scale) === bin) inBin.push(k);
	inBin.sort((a, b) => dist[a] - dist[b]);
	for (const k of inBin) {
		acc += mass[k];
		if (acc >= want * (1 - 1e-12)) return dist[k];
	}
	return inBin.length > 0 ? dist[inBin[inBin.length - 1]] : maxD;
}
