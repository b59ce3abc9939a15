/**
 * Decoders for TIFF's lossless compressions that stop at the size a block must decode to. A
 * stream that would inflate past it fails with BlockOverflow at once, with at most `limit` bytes
 * held, instead of growing until memory runs out. Pure except for Deflate, which uses Node's zlib
 * (its `maxOutputLength` bounds the output the same way).
 */
import { inflateSync } from 'node:zlib';

export const BLOCK_OVERFLOW = 'inflates past the bytes its block holds';

/** A compressed block that decodes to more than its block can hold. */
export class BlockOverflow extends Error {
	constructor(codec: string, limit: number) {
		super(`${codec} block ${BLOCK_OVERFLOW} (${limit})`);
		this.name = 'BlockOverflow';
	}
}

/** Deflate (TIFF compression 8 and 32946): a zlib stream (RFC 1950). */
export function inflateBounded(input: Uint8Array, limit: number): Uint8Array {
	try {
		return inflateSync(input, { maxOutputLength: Math.max(1, limit) });
	} catch (e) {
		if ((e as { code?: string }).code === 'ERR_BUFFER_TOO_LARGE' || e instanceof RangeError) throw new BlockOverflow('Deflate', limit);
		throw e;
	}
}

const CLEAR = 256;
const EOI = 257;

/**
 * TIFF LZW (compression 5; TIFF 6.0, section 13): codes of 9 to 12 bits, most significant bit
 * first, widening one code early ("early change"), as libtiff and GDAL write it.
 */
export function lzwDecodeBounded(input: Uint8Array, limit: number): Uint8Array {
	const out = new Uint8Array(limit);
	const prefix = new Int16Array(4096).fill(-1);
	const suffix = new Uint8Array(4096);
	const length = new Uint16Array(4096);
	for (let i = 0; i < 256; i++) {
		suffix[i] = i;
		length[i] = 1;
	}
	const totalBits = input.length * 8;
	let bit = 0;
	let width = 9;
	let next = 258;
	let old = -1;
	let o = 0;
	const read = (): number => {
		if (bit + width > totalBits) return EOI; // ran out without an end code: take what came
		let v = 0;
		for (let k = 0; k < width; k++, bit++) v = (v << 1) | ((input[bit >> 3] >> (7 - (bit & 7))) & 1);
		return v;
	};
	const firstByte = (code: number): number => {
		let c = code;
		while (prefix[c] !== -1) c = prefix[c];
		return suffix[c];
	};
	const emit = (code: number): void => {
		const len = length[code];
		if (o + len > limit) throw new BlockOverflow('LZW', limit);
		let c = code;
		for (let k = len - 1; k >= 0; k--) {
			out[o + k] = suffix[c];
			c = prefix[c];
		}
		o += len;
	};
	const add = (p: number, ch: number): void => {
		if (next >= 4096) return;
		prefix[next] = p;
		suffix[next] = ch;
		length[next] = length[p] + 1;
		next++;
	};
	for (;;) {
		const code = read();
		if (code === EOI) break;
		if (code === CLEAR) {
			width = 9;
			next = 258;
			old = -1;
			continue;
		}
		if (old === -1) {
			if (code > 255) throw new Error(`corrupt LZW: code ${code} right after a clear code`);
			emit(code);
		} else if (code < next) {
			emit(code);
			add(old, firstByte(code));
		} else if (code === next) {
			add(old, firstByte(old));
			emit(code);
		} else {
			throw new Error(`corrupt LZW: code ${code} is not yet defined`);
		}
		old = code;
		if (next + 1 >= 1 << width && width < 12) width++;
	}
	return out.subarray(0, o);
}

/** PackBits (compression 32773; TIFF 6.0, section 9). */
export function packBitsDecodeBounded(input: Uint8Array, limit: number): Uint8Array {
	const out = new Uint8Array(limit);
	let o = 0;
	for (let i = 0; i < input.length; ) {
		const n = (input[i++] << 24) >> 24; // signed byte
		if (n >= 0) {
			if (o + n + 1 > limit) throw new BlockOverflow('PackBits', limit);
			out.set(input.subarray(i, i + n + 1), o);
			o += n + 1;
			i += n + 1;
		} else if (n !== -128) {
			if (o + 1 - n > limit) throw new BlockOverflow('PackBits', limit);
			out.fill(input[i++], o, o + 1 - n);
			o += 1 - n;
		}
	}
	return out.subarray(0, o);
}
