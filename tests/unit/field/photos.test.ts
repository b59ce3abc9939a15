import { describe, expect, it } from 'vitest';
import { PNG } from 'pngjs';
import { fitWithin } from '../../../src/lib/components/field/photo-resize';
import { sniffPhoto } from '../../../src/lib/server/services/field-photos';

describe('fitWithin (resizing a photo on the phone)', () => {
	it('brings the longest side to 1600 px and keeps the aspect ratio of common camera formats', () => {
		// A 12-megapixel 4:3 sensor gives 4032 × 3024 (common practice, no source) → 1600 × 1200.
		expect(fitWithin(4032, 3024)).toEqual({ width: 1600, height: 1200 });
		// Portrait 3:4 → 1200 × 1600; 16:9 at 3840 × 2160 → 1600 × 900 (exact ratios).
		expect(fitWithin(3024, 4032)).toEqual({ width: 1200, height: 1600 });
		expect(fitWithin(3840, 2160)).toEqual({ width: 1600, height: 900 });
	});
	it('never enlarges a small photo and refuses an empty size', () => {
		expect(fitWithin(800, 600)).toEqual({ width: 800, height: 600 });
		expect(fitWithin(10000, 1)).toEqual({ width: 1600, height: 1 });
		expect(() => fitWithin(0, 100)).toThrow(RangeError);
	});
});

describe('sniffPhoto', () => {
	it('reads a PNG written by pngjs, whatever it is called', () => {
		const png = new PNG({ width: 5, height: 7 });
		expect(sniffPhoto(new Uint8Array(PNG.sync.write(png)))).toEqual({ contentType: 'image/png', width: 5, height: 7 });
	});
	it('refuses GIF, WebP, SVG and text with a clear message', () => {
		const gif = Uint8Array.from([0x47, 0x49, 0x46, 0x38, 0x39, 0x61, 1, 0, 1, 0, 0, 0, 0]); // "GIF89a", GIF89a spec §17
		const webp = new Uint8Array([...new TextEncoder().encode('RIFF'), 30, 0, 0, 0, ...new TextEncoder().encode('WEBPVP8 ')]); // RIFF container, RFC 9649 §2
		const svg = new TextEncoder().encode('<svg xmlns="http://www.w3.org/2000/svg" width="10" height="10"/>');
		for (const bad of [gif, webp, svg, new TextEncoder().encode('hello')]) {
			expect(() => sniffPhoto(bad)).toThrow(expect.objectContaining({ status: 415, code: 'unsupported_image', message: expect.stringContaining('JPEG and PNG') }));
		}
		expect(() => sniffPhoto(new Uint8Array())).toThrow(expect.objectContaining({ status: 400 }));
	});
});
