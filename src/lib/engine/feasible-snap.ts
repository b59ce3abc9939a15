/**
 * Nearest feasible cell of every cell: an exact Euclidean distance transform with argmin
 * (Felzenszwalb & Huttenlocher's lower envelope of parabolas, first along columns, then rows).
 * O(cells). Returns, per cell, the index of the nearest feasible cell (itself if feasible),
 * or -1 when no cell is feasible.
 */
export function nearestFeasibleCells(feasible: Uint8Array, width: number, height: number): Int32Array {
	const cells = width * height;
	const nearRow = new Int32Array(cells).fill(-1);
	const g = new Float64Array(cells).fill(Infinity);
	// Columns: nearest feasible row in the same column (two sweeps).
	for (let c = 0; c < width; c++) {
		let last = -1;
		for (let r = 0; r < height; r++) {
			if (feasible[r * width + c]) last = r;
			if (last >= 0) {
				nearRow[r * width + c] = last;
				g[r * width + c] = (r - last) ** 2;
			}
		}
		last = -1;
		for (let r = height - 1; r >= 0; r--) {
			if (feasible[r * width + c]) last = r;
			if (last >= 0 && (r - last) ** 2 < g[r * width + c]) {
				nearRow[r * width + c] = last;
				g[r * width + c] = (r - last) ** 2;
			}
		}
	}
	const out = new Int32Array(cells).fill(-1);
	const hull = new Int32Array(width);
	const bounds = new Float64Array(width + 1);
	for (let r = 0; r < height; r++) {
		const o = r * width;
		let k = -1;
		for (let q = 0; q < width; q++) {
			const fq = g[o + q];
			if (fq === Infinity) continue;
			let s = -Infinity;
			while (k >= 0) {
				const p = hull[k];
				s = (fq + q * q - (g[o + p] + p * p)) / (2 * (q - p));
				if (s <= bounds[k]) k--;
				else break;
			}
			k++;
			hull[k] = q;
			bounds[k] = k === 0 ? -Infinity : s;
			bounds[k + 1] = Infinity;
		}
		if (k < 0) continue;
		let j = 0;
		for (let q = 0; q < width; q++) {
			while (bounds[j + 1] < q) j++;
			const p = hull[j];
			out[o + q] = nearRow[o + p] * width + p;
		}
	}
	return out;
}
