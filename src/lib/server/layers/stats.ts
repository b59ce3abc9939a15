/**
 * Summary statistics and a fixed 32-bin histogram of a band's valid cells (finite and not nodata).
 * Mean and standard deviation use Welford's one-pass update (numerically stable for large,
 * offset values); the standard deviation is the population one (divides by n).
 *
 * Streaming (BandSummary): blocks of a raster are added one after another, and the statistics and
 * histogram come out at the end of the one pass. The histogram is exact while the band has at most
 * EXACT_HISTOGRAM_VALUES valid cells (they are kept, 4 bytes each); beyond that it is built from
 * FINE_BINS fine bins over a range that doubles when a value falls outside it, each fine bin
 * counted in the 32-bin histogram's bin that holds its centre: a count can then be off by the
 * cells of the one fine bin that straddles an edge (at least 64 fine bins make one bin). The
 * counts always add up to the valid cells, and min, max and the edges are exact.
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

/** Valid cells up to which a streamed histogram is exact. */
export const EXACT_HISTOGRAM_VALUES = 1_000_000;
/** Fine bins of a streamed histogram beyond that. */
export const FINE_BINS = 4096;

/** Statistics and histogram of a band added block by block (see the note at the top). */
export class BandSummary {
	private n = 0;
	private mean = 0;
	private m2 = 0;
	private min = Infinity;
	private max = -Infinity;
	private kept: Float64Array | null = new Float64Array(1024);
	private fine: Float64Array | null = null;
	private lo = 0;
	private hi = 0;
	/** Fine bins per unit of value. */
	private scale = 1;

	constructor(private readonly nodata: number | null) {}

	/** Values kept for the exact histogram (while `kept` is not null). */
	private keptCount = 0;

	/**
	 * Add a block: its own count, mean and squared deviations (two passes over the block in
	 * memory), merged into the running ones by Chan, Golub and LeVeque's pairwise update.
	 */
	add(data: Float32Array | Float64Array | ArrayLike<number>): void {
		// A Float32 band stores nodata rounded to single precision.
		const nd = this.nodata === null ? NaN : data instanceof Float32Array ? Math.fround(this.nodata) : this.nodata;
		let n = 0;
		let sum = 0;
		let min = this.min;
		let max = this.max;
		for (let i = 0; i < data.length; i++) {
			const v = data[i];
			if (!(v > -Infinity && v < Infinity) || v === nd) continue;
			n++;
			sum += v;
			if (v < min) min = v;
			if (v > max) max = v;
			if (this.kept) this.keep(v);
			else this.addFine(v);
		}
		if (n === 0) return;
		this.min = min;
		this.max = max;
		const mean = sum / n;
		let m2 = 0;
		for (let i = 0; i < data.length; i++) {
			const v = data[i];
			if (!(v > -Infinity && v < Infinity) || v === nd) continue;
			const d = v - mean;
			m2 += d * d;
		}
		const total = this.n + n;
		const delta = mean - this.mean;
		this.mean += (delta * n) / total;
		this.m2 += m2 + (delta * delta * this.n * n) / total;
		this.n = total;
	}

	private keep(v: number): void {
		let kept = this.kept!;
		if (this.keptCount === kept.length) {
			if (kept.length >= EXACT_HISTOGRAM_VALUES) {
				this.startFine();
				this.addFine(v);
				return;
			}
			const grown = new Float64Array(Math.min(EXACT_HISTOGRAM_VALUES, kept.length * 2));
			grown.set(kept);
			this.kept = kept = grown;
		}
		kept[this.keptCount++] = v;
	}

	private startFine(): void {
		const kept = this.kept!;
		this.kept = null;
		this.fine = new Float64Array(FINE_BINS);
		this.lo = kept[0];
		this.hi = kept[0];
		for (let i = 0; i < this.keptCount; i++) {
			if (kept[i] < this.lo) this.lo = kept[i];
			if (kept[i] > this.hi) this.hi = kept[i];
		}
		if (!(this.hi > this.lo)) this.hi = this.lo + 1;
		this.scale = FINE_BINS / (this.hi - this.lo);
		for (let i = 0; i < this.keptCount; i++) this.addFine(kept[i]);
	}

	private addFine(v: number): void {
		const fine = this.fine!;
		while (v < this.lo || v > this.hi) {
			// Double the range away from the value's side; pairs of fine bins merge into one.
			const span = this.hi - this.lo;
			const half = FINE_BINS / 2;
			if (v > this.hi) {
				for (let k = 0; k < half; k++) fine[k] = fine[2 * k] + fine[2 * k + 1];
				fine.fill(0, half);
				this.hi = this.lo + 2 * span;
				this.scale = FINE_BINS / (this.hi - this.lo);
			} else {
				for (let k = FINE_BINS - 1; k >= half; k--) fine[k] = fine[2 * k - FINE_BINS] + fine[2 * k - FINE_BINS + 1];
				fine.fill(0, 0, half);
				this.lo = this.hi - 2 * span;
				this.scale = FINE_BINS / (this.hi - this.lo);
			}
		}
		let k = ((v - this.lo) * this.scale) | 0;
		if (k >= FINE_BINS) k = FINE_BINS - 1;
		fine[k]++;
	}

	stats(): BandStats {
		if (this.n === 0) return { min: NaN, max: NaN, mean: NaN, std: NaN, validCount: 0 };
		return { min: this.min, max: this.max, mean: this.mean, std: Math.sqrt(this.m2 / this.n), validCount: this.n };
	}

	histogram(bins = HISTOGRAM_BINS): Histogram {
		if (this.kept) return bandHistogram(this.kept.subarray(0, this.keptCount), null, this.min, this.max, bins);
		const { min, max } = this;
		const exact = bandHistogram([], null, min, max, bins);
		const fine = this.fine!;
		const lo = exact.edges[0];
		const width = (exact.edges[bins] - lo) / bins;
		const fineWidth = (this.hi - this.lo) / FINE_BINS;
		for (let k = 0; k < FINE_BINS; k++) {
			if (fine[k] === 0) continue;
			const centre = this.lo + (k + 0.5) * fineWidth;
			const b = Math.min(bins - 1, Math.max(0, Math.floor((centre - lo) / width)));
			exact.counts[b] += fine[k];
		}
		return exact;
	}
}
