/**
 * Row-by-row extent of a convex polygon (grid units, rows centred at v = r + 0.5), given as a
 * flat open ring [u0, v0, u1, v1, ...].
 *
 * For each row r whose centre crosses the polygon, fills lo[r] and hi[r] with the polygon's
 * x-interval at v = r + 0.5, and returns the half-open row range [rowStart, rowEnd).
 * Ties are half-open: a row centre on the polygon's top vertex belongs to it, one on its
 * bottom vertex does not, and each edge is evaluated with its endpoints in canonical order
 * (lower v first) so two polygons sharing an edge compute bit-identical x at every row.
 * Cells are then taken as centres in [lo, hi): a centre on a shared edge is counted once.
 */
export function polygonRowSpans(
	ring: ArrayLike<number>,
	height: number,
	lo: Float64Array,
	hi: Float64Array
): { rowStart: number; rowEnd: number } {
	let vMin = Infinity;
	let vMax = -Infinity;
	const nv = ring.length >> 1;
	for (let k = 0; k < nv; k++) {
		const v = ring[2 * k + 1];
		if (v < vMin) vMin = v;
		if (v > vMax) vMax = v;
	}
	const rowStart = Math.max(0, Math.ceil(vMin - 0.5));
	const rowEnd = Math.min(height, Math.ceil(vMax - 0.5));
	if (rowEnd <= rowStart) return { rowStart: 0, rowEnd: 0 };
	for (let r = rowStart; r < rowEnd; r++) {
		lo[r] = Infinity;
		hi[r] = -Infinity;
	}
	for (let k = 0; k < nv; k++) {
		const k2 = k + 1 === nv ? 0 : 2 * (k + 1);
		let pu = ring[2 * k];
		let pv = ring[2 * k + 1];
		let qu = ring[k2];
		let qv = ring[k2 + 1];
		if (pv === qv) continue; // horizontal edge: its row (if any) is covered by the neighbours
		if (pv > qv) {
			const tu = pu;
			pu = qu;
			qu = tu;
			const tv = pv;
			pv = qv;
			qv = tv;
		}
		const slope = (qu - pu) / (qv - pv);
		const r0 = Math.max(rowStart, Math.ceil(pv - 0.5));
		const r1 = Math.min(rowEnd, Math.ceil(qv - 0.5));
		for (let r = r0; r < r1; r++) {
			const x = pu + (r + 0.5 - pv) * slope;
			if (x < lo[r]) lo[r] = x;
			if (x > hi[r]) hi[r] = x;
		}
	}
	return { rowStart, rowEnd };
}

/** First column whose centre c + 0.5 is >= x (closed lower bound). */
export function firstColumnAtOrAfter(x: number): number {
	return Math.ceil(x - 0.5);
}

/** One past the last column whose centre is < x (open upper bound). */
export function columnEndBefore(x: number): number {
	return Math.ceil(x - 0.5);
}

/** One past the last column whose centre is <= x (closed upper bound). */
export function columnEndAtOrBefore(x: number): number {
	return Math.floor(x - 0.5) + 1;
}
