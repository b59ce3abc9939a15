import { forEachOwnedRun } from './cell-moments';

/**
 * Mass-weighted quantile of the distance from each cell centre to its nearest sensor
 * (grid units): the smallest distance d with Σ{φ : dist ≤ d} ≥ q·Σφ.
 * Nearest-sensor passes over the Voronoi row spans (O(cells) each): the first finds the total
 * mass and the largest distance, the second fills a 4096-bin histogram that locates the
 * quantile's bin, the third collects that bin's cells, and only those are sorted, so the answer
 * is exact without sorting every cell. Distances are computed again in each pass rather than
 * kept (8 bytes a cell saved). Run once, on the final state (not per iteration).
 */
export function weightedDistanceQuantile(
	mass: Float64Array,
	width: number,
	height: number,
	pu: Float64Array,
	pv: Float64Array,
	q: number
): number {
	// Three passes, each with its loop written out: a callback per cell would box every distance
	// (and so would sums kept in variables the callbacks assign: they live in a typed array).
	const first = new Float64Array(2); // total mass, largest distance
	forEachOwnedRun(width, height, pu, pv, (r, c0, c1, i) => {
		const dv = r + 0.5 - pv[i];
		let total = 0;
		let maxD = first[1];
		for (let c = c0; c < c1; c++) {
			const m = mass[r * width + c];
			if (!(m > 0)) continue;
			const du = c + 0.5 - pu[i];
			const d = Math.sqrt(du * du + dv * dv);
			total += m;
			if (d > maxD) maxD = d;
		}
		first[0] += total;
		first[1] = maxD;
	});
	const [total, maxD] = first;
	if (!(total > 0)) return 0;
	const bins = 4096;
	const hist = new Float64Array(bins);
	const scale = maxD > 0 ? (bins - 1) / maxD : 0;
	forEachOwnedRun(width, height, pu, pv, (r, c0, c1, i) => {
		const dv = r + 0.5 - pv[i];
		for (let c = c0; c < c1; c++) {
			const m = mass[r * width + c];
			if (!(m > 0)) continue;
			const du = c + 0.5 - pu[i];
			hist[Math.floor(Math.sqrt(du * du + dv * dv) * scale)] += m;
		}
	});
	const want = q * total;
	let acc = 0;
	let bin = 0;
	for (; bin < bins; bin++) {
		if (acc + hist[bin] >= want) break;
		acc += hist[bin];
	}
	if (bin >= bins) bin = bins - 1;
	const inBin: { k: number; d: number }[] = [];
	forEachOwnedRun(width, height, pu, pv, (r, c0, c1, i) => {
		const dv = r + 0.5 - pv[i];
		for (let c = c0; c < c1; c++) {
			const k = r * width + c;
			if (!(mass[k] > 0)) continue;
			const du = c + 0.5 - pu[i];
			const d = Math.sqrt(du * du + dv * dv);
			if (Math.floor(d * scale) === bin) inBin.push({ k, d });
		}
	});
	inBin.sort((a, b) => a.d - b.d || a.k - b.k);
	for (const { k, d } of inBin) {
		acc += mass[k];
		if (acc >= want * (1 - 1e-12)) return d;
	}
	return inBin.length > 0 ? inBin[inBin.length - 1].d : maxD;
}
