/**
 * Summary statistics and a fixed 32-bin histogram of a band's valid cells (finite and not nodata).
 * Mean and standard deviation use Welford's one-pass update (numerically stable for large,
 * offset values); the standard deviation is the population one (divides by n).
 */
export interface BandStats {
	min: number;
	max: number;
	mean: number;
	std: number;
	validCount: number;
}

export interface Histogram {
	/** bins + 1 increasing edges; bin k holds edges[k] ≤ v < edges[k+1], the last bin includes max. */
	edges: number[];
	counts: number[];
}

export const HISTOGRAM_BINS = 32;

function valid(v: number, nodata: number | null): boolean {
	return Number.isFinite(v) && (nodata === null || v !== nodata);
}

export function bandStats(data: ArrayLike<number>, nodata: number | null): BandStats {
	let n = 0;
	let mean = 0;
	let m2 = 0;
	let min = Infinity;
	let max = -Infinity;
	for (let i = 0; i < data.length; i++) {
		const v = data[i];
		if (!valid(v, nodata)) continue;
		n++;
		const d = v - mean;
		mean += d / n;
		m2 += d * (v - mean);
		if (v < min) min = v;
		if (v > max) max = v;
	}
	if (n === 0) return { min: NaN, max: NaN, mean: NaN, std: NaN, validCount: 0 };
	return { min, max, mean, std: Math.sqrt(m2 / n), validCount: n };
}

/**
 * Histogram of valid cells over [min, max] in `bins` equal bins. A constant band (min = max) gets
 * edges spanning min − 0.5 … min + 0.5 so that the edges still increase; its cells fall in the
 * middle bin. The counts always add up to the number of valid cells.
 */
export function bandHistogram(data: ArrayLike<number>, nodata: number | null, min: number, max: number, bins = HISTOGRAM_BINS): Histogram {
	if (!Number.isInteger(bins) || bins < 1) throw new RangeError(`bins must be a positive integer, not ${bins}`);
	const counts = new Array<number>(bins).fill(0);
	if (!Number.isFinite(min) || !Number.isFinite(max)) return { edges: [], counts: [] };
	const lo = min === max ? min - 0.5 : min;
	const hi = min === max ? max + 0.5 : max;
	const width = (hi - lo) / bins;
	const edges = Array.from({ length: bins + 1 }, (_, k) => (k === bins ? hi : lo + k * width));
	for (let i = 0; i < data.length; i++) {
		const v = data[i];
		if (!valid(v, nodata) || v < lo || v > hi) continue;
		let k = Math.floor((v - lo) / width);
		if (k >= bins) k = bins - 1;
		counts[k]++;
	}
	return { edges, counts };
}
