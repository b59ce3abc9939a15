import { describe, expect, it } from 'vitest';
import { bandHistogram, bandStats, BandSummary, EXACT_HISTOGRAM_VALUES, FINE_BINS } from '../../../src/lib/server/layers';
import { mulberry32 } from '../../../src/lib/engine/prng';

describe('BandSummary (statistics and histogram streamed block by block)', () => {
	it('matches the whole-band Welford statistics and exact histogram on a small band split into blocks', () => {
		const rand = mulberry32(5);
		const data = Float32Array.from({ length: 10_000 }, (_, i) => (i % 97 === 0 ? -9999 : 1000 + rand() * 3));
		const s = new BandSummary(-9999);
		for (let i = 0; i < data.length; i += 1234) s.add(data.subarray(i, i + 1234));
		const ref = bandStats(data, -9999); // Welford's one pass over the whole band
		const got = s.stats();
		expect(got.validCount).toBe(ref.validCount);
		expect([got.min, got.max]).toEqual([ref.min, ref.max]);
		expect(got.mean).toBeCloseTo(ref.mean, 9);
		expect(got.std).toBeCloseTo(ref.std, 9);
		expect(s.histogram()).toEqual(bandHistogram(data, -9999, ref.min, ref.max));
	});

	it('beyond the exact limit, counts add up, edges are exact and each bin is off by at most one fine bin', () => {
		const rand = mulberry32(9);
		const n = EXACT_HISTOGRAM_VALUES + 300_000;
		// Values arrive narrow first and widen later, so the fine range must double several times.
		const data = new Float64Array(n);
		for (let i = 0; i < n; i++) data[i] = i < 500_000 ? 10 + rand() : -50 + rand() * 200 * (i / n);
		const s = new BandSummary(null);
		for (let i = 0; i < n; i += 65_536) s.add(data.subarray(i, i + 65_536));
		const { min, max, validCount } = s.stats();
		const exact = bandHistogram(data, null, min, max);
		const got = s.histogram();
		expect(validCount).toBe(n);
		expect(got.edges).toEqual(exact.edges);
		expect(got.counts.reduce((a, b) => a + b, 0)).toBe(n);
		// Worst case per bin: the fine bins straddling its two edges (≤ 2·range/FINE_BINS wide each).
		const fineWidth = (2 * (max - min)) / FINE_BINS;
		for (let b = 0; b < exact.counts.length; b++) {
			let near = 0;
			for (const v of data) if (Math.abs(v - exact.edges[b]) <= 2 * fineWidth || Math.abs(v - exact.edges[b + 1]) <= 2 * fineWidth) near++;
			expect(Math.abs(got.counts[b] - exact.counts[b])).toBeLessThanOrEqual(near);
		}
	});

	it('an all-nodata band has no statistics and an empty histogram', () => {
		const s = new BandSummary(-1);
		s.add(Float32Array.from([-1, NaN, Infinity]));
		expect(s.stats().validCount).toBe(0);
		expect(s.histogram()).toEqual({ edges: [], counts: [] });
	});
});
