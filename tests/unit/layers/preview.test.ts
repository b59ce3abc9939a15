import { PNG } from 'pngjs';
import { describe, expect, it } from 'vitest';
import { downsample, legendStops, previewSize, rampColour, rampStops, renderPreview } from '../../../src/lib/server/layers';
import { rampTable } from '../../../src/lib/importance';

/** CIE 1976 L* of an sRGB colour (sRGB transfer per IEC 61966-2-1; L* per CIE 15) [from memory]. */
function lightness([r, g, b]: readonly number[]): number {
	const lin = (c: number) => {
		const s = c / 255;
		return s <= 0.04045 ? s / 12.92 : ((s + 0.055) / 1.055) ** 2.4;
	};
	const y = 0.2126 * lin(r) + 0.7152 * lin(g) + 0.0722 * lin(b);
	const f = y > 216 / 24389 ? Math.cbrt(y) : ((24389 / 27) * y + 16) / 116;
	return 116 * f - 16;
}

describe('colour ramp', () => {
	it('lightness falls strictly from low to high values over 256 samples (readable without hue)', () => {
		const lut = rampTable('moorland');
		let prev = Infinity;
		for (let i = 0; i < 256; i++) {
			const l = lightness([lut[i * 3], lut[i * 3 + 1], lut[i * 3 + 2]]);
			expect(l).toBeLessThan(prev + 1e-9);
			prev = l;
		}
		const stops = rampStops();
		expect(lightness(stops[0]) - lightness(stops[stops.length - 1])).toBeGreaterThan(75);
		// adjacent control colours at least 10 L* apart
		for (let k = 1; k < stops.length; k++) expect(lightness(stops[k - 1]) - lightness(stops[k])).toBeGreaterThan(10);
	});
	it('the reversed ramp is the same colours the other way', () => {
		expect(rampColour(0, 'moorland-reversed')).toEqual(rampColour(1, 'moorland'));
		expect(rampColour(0.25, 'moorland-reversed')).toEqual(rampColour(0.75, 'moorland'));
	});
});

describe('legendStops(min, max)', () => {
	it('five evenly spaced values with the ramp colours at their ends', () => {
		const stops = legendStops(0.05, 0.45);
		expect(stops.map((s) => s.value)).toEqual([0.05, 0.15, 0.25, 0.35, 0.45]);
		expect(stops[0].colour).toBe('#f7edc4');
		expect(stops[4].colour).toBe('#161d33');
		for (const s of stops) expect(s.colour).toMatch(/^#[0-9a-f]{6}$/);
	});
	it('one stop for a constant layer, and errors for a bad range', () => {
		expect(legendStops(3, 3)).toHaveLength(1);
		expect(() => legendStops(2, 1)).toThrow(RangeError);
		expect(() => legendStops(NaN, 1)).toThrow(RangeError);
	});
});

describe('renderPreview', () => {
	it('keeps small bands at full size and colours min light, max dark, nodata transparent', () => {
		const prev = renderPreview({ width: 3, height: 1, data: Float32Array.from([0, -9999, 10]), nodata: -9999 });
		expect([prev.width, prev.height, prev.min, prev.max]).toEqual([3, 1, 0, 10]);
		const img = PNG.sync.read(prev.png);
		expect([img.width, img.height]).toEqual([3, 1]);
		expect(Array.from(img.data.subarray(0, 4))).toEqual([...rampColour(0), 255]);
		expect(img.data[7]).toBe(0); // alpha of the nodata pixel
		expect(Array.from(img.data.subarray(8, 12))).toEqual([...rampColour(1), 255]);
	});
	it('downsamples to at most 512 px on the longer side, keeping the aspect ratio', () => {
		expect(previewSize(2000, 1000)).toEqual({ width: 512, height: 256 });
		expect(previewSize(100, 3000)).toEqual({ width: 17, height: 512 });
		const w = 1030;
		const h = 20;
		const prev = renderPreview({ width: w, height: h, data: new Float32Array(w * h).map((_, i) => i % w), nodata: null });
		const img = PNG.sync.read(prev.png);
		expect([img.width, img.height]).toEqual([512, 10]);
	});
	it('box-averages valid cells: a 4×4 band into 2×2 takes each 2×2 block mean, ignoring nodata', () => {
		const data = Float32Array.from([1, 3, 10, 10, 5, 7, 10, NaN, 0, 0, -1, -1, 0, 4, -1, -1]);
		const out = downsample({ width: 4, height: 4, data, nodata: -1 }, 2, 2);
		expect(out[0]).toBe(4); // (1+3+5+7)/4
		expect(out[1]).toBe(10); // NaN left out
		expect(out[2]).toBe(1); // (0+0+0+4)/4
		expect(out[3]).toBeNaN(); // all nodata
	});
	it('an all-nodata band gives a fully transparent preview', () => {
		const prev = renderPreview({ width: 2, height: 2, data: new Float32Array(4).fill(NaN), nodata: null });
		const img = PNG.sync.read(prev.png);
		for (let p = 0; p < 4; p++) expect(img.data[p * 4 + 3]).toBe(0);
		expect(prev.min).toBeNaN();
	});
	it('a constant band takes the middle of the ramp, and a fixed range clamps', () => {
		const c = PNG.sync.read(renderPreview({ width: 1, height: 1, data: [7], nodata: null }).png);
		expect(Array.from(c.data.subarray(0, 3))).toEqual([...rampColour(128 / 255)]);
		const r = PNG.sync.read(renderPreview({ width: 2, height: 1, data: [-5, 50], nodata: null }, { range: { min: 0, max: 10 } }).png);
		expect(Array.from(r.data.subarray(0, 3))).toEqual([...rampColour(0)]);
		expect(Array.from(r.data.subarray(4, 7))).toEqual([...rampColour(1)]);
	});
});
