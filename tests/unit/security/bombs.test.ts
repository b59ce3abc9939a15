import { inflateSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { lzwZeroBomb, zlibZeroBomb } from '../../helpers/bombs';

// The bomb builders are checked against decoders we did not write: Node's zlib, geotiff's LZW.
describe('test bombs', () => {
	it('zlibZeroBomb(n) inflates with zlib to exactly 1 + 258·n zero bytes', () => {
		const out = inflateSync(zlibZeroBomb(1000));
		expect(out.byteLength).toBe(1 + 258 * 1000);
		expect(out.every((v) => v === 0)).toBe(true);
		// 258 bytes for every 13 bits: 258 · 8 / 13 ≈ 158.8:1 (fixed codes; dynamic ones reach about 1032:1).
		const ratio = out.byteLength / zlibZeroBomb(1000).byteLength;
		expect(ratio).toBeGreaterThan(150);
		expect(ratio).toBeLessThan(258 * 8 / 13);
	});

	it("lzwZeroBomb(1) decodes with geotiff's LZW decoder to about 7 million zero bytes from about 5 kB", async () => {
		const { getDecoder } = await import('geotiff');
		const decoder = await getDecoder(5, { tileWidth: 1, tileHeight: 1, planarConfiguration: 1, bitsPerSample: 8, predictor: 1 });
		const stream = lzwZeroBomb(1);
		const out = new Uint8Array(await decoder.decode(stream.buffer as ArrayBuffer));
		// Strings of 1, 2, 3, … 3743 bytes: 3743 · 3744 / 2 = 7 006 896 bytes.
		expect(out.byteLength).toBe((3743 * 3744) / 2);
		expect(out.every((v) => v === 0)).toBe(true);
		expect(stream.byteLength).toBeLessThan(6000);
	});
});
