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

describe('bounded decoders', () => {
	it("lzwDecodeBounded agrees with geotiff's own LZW decoder, and stops at its limit", async () => {
		const { lzwDecodeBounded, BlockOverflow } = await import('../../../src/lib/geo/bounded-decoders');
		const stream = lzwZeroBomb(2);
		const ours = lzwDecodeBounded(stream, 20_000_000);
		expect(ours.byteLength).toBe(3743 * 3744); // two tables of 7 006 896 bytes
		expect(() => lzwDecodeBounded(stream, 1_000_000)).toThrow(BlockOverflow);
	});

	it('packBitsDecodeBounded unpacks the PackBits example of Apple TN1023, and stops at its limit', async () => {
		const { packBitsDecodeBounded, BlockOverflow } = await import('../../../src/lib/geo/bounded-decoders');
		// Apple Technical Note TN1023 (the scheme TIFF 6.0, section 9 adopts) [from memory].
		const packed = Uint8Array.from([0xfe, 0xaa, 0x02, 0x80, 0x00, 0x2a, 0xfd, 0xaa, 0x03, 0x80, 0x00, 0x2a, 0x22, 0xf7, 0xaa]);
		const unpacked = [0xaa, 0xaa, 0xaa, 0x80, 0x00, 0x2a, 0xaa, 0xaa, 0xaa, 0xaa, 0x80, 0x00, 0x2a, 0x22, ...new Array(10).fill(0xaa)];
		expect(Array.from(packBitsDecodeBounded(packed, 100))).toEqual(unpacked);
		expect(() => packBitsDecodeBounded(packed, 20)).toThrow(BlockOverflow);
	});

	it('inflateBounded stops a zlib bomb at its limit', async () => {
		const { inflateBounded, BlockOverflow } = await import('../../../src/lib/geo/bounded-decoders');
		expect(inflateBounded(zlibZeroBomb(10), 3000).byteLength).toBe(2581);
		expect(() => inflateBounded(zlibZeroBomb(100_000), 1_000_000)).toThrow(BlockOverflow);
	});
});
