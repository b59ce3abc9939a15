/**
 * Hand-built compressed streams that expand enormously, for testing that uploads refuse them.
 * Each follows its format's specification directly (the decoders that read them are not ours).
 */

/** Bits written least-significant first, as Deflate packs them (RFC 1951, 3.1.1). */
class LsbBits {
	private bytes: number[] = [];
	private acc = 0;
	private n = 0;
	write(value: number, count: number): void {
		for (let i = 0; i < count; i++) this.push((value >> i) & 1);
	}
	/** A Huffman code goes most-significant bit first (RFC 1951, 3.1.1). */
	writeCode(code: number, length: number): void {
		for (let i = length - 1; i >= 0; i--) this.push((code >> i) & 1);
	}
	private push(bit: number): void {
		this.acc |= bit << this.n++;
		if (this.n === 8) {
			this.bytes.push(this.acc);
			this.acc = 0;
			this.n = 0;
		}
	}
	finish(): number[] {
		if (this.n > 0) this.bytes.push(this.acc);
		return this.bytes;
	}
}

/**
 * A zlib stream (RFC 1950) of one fixed-Huffman Deflate block (RFC 1951, 3.2.6) that inflates to
 * 1 + 258·repeats zero bytes: a literal 0, then `repeats` copies of <length 258, distance 1>,
 * 13 bits each, about 1/159 of a bit per output byte.
 */
export function zlibZeroBomb(repeats: number): Uint8Array {
	const b = new LsbBits();
	b.write(1, 1); // BFINAL
	b.write(1, 2); // BTYPE 01: fixed Huffman codes
	b.writeCode(0x30 + 0, 8); // literal 0: codes 0–143 are 8 bits from 00110000
	for (let i = 0; i < repeats; i++) {
		b.writeCode(0xc0 + (285 - 280), 8); // length 258 is code 285, 8 bits from 11000000 (280–287), no extra bits
		b.writeCode(0, 5); // distance code 0 (distance 1), 5 bits, no extra bits
	}
	b.writeCode(0, 7); // end of block: code 256, 7 bits 0000000
	const body = b.finish();
	const n = 1 + 258 * repeats;
	// Adler-32 of n zero bytes: A stays 1, B gains 1 per byte (RFC 1950, 8.2).
	const adlerA = 1;
	const adlerB = n % 65521;
	const adler = [(adlerB >> 8) & 0xff, adlerB & 0xff, (adlerA >> 8) & 0xff, adlerA & 0xff];
	return Uint8Array.from([0x78, 0x01, ...body, ...adler]);
}

/** Bits written most-significant first, as TIFF's LZW packs them (TIFF 6.0, section 13). */
class MsbBits {
	private bytes: number[] = [];
	private acc = 0;
	private n = 0;
	write(value: number, count: number): void {
		for (let i = count - 1; i >= 0; i--) {
			this.acc = (this.acc << 1) | ((value >> i) & 1);
			if (++this.n === 8) {
				this.bytes.push(this.acc);
				this.acc = 0;
				this.n = 0;
			}
		}
	}
	finish(): Uint8Array {
		if (this.n > 0) this.bytes.push(this.acc << (8 - this.n));
		return Uint8Array.from(this.bytes);
	}
}

/**
 * A TIFF LZW stream (TIFF 6.0, section 13) of `tables` string tables, each built by always sending
 * the code about to be defined (the KwKwK case), so each code's string is one byte longer than the
 * last: one table of about 3 800 codes (5 kB) decodes to about 7 million bytes. Code widths grow
 * one code early, as TIFF's LZW does ("early change").
 */
export function lzwZeroBomb(tables: number): Uint8Array {
	const CLEAR = 256;
	const EOI = 257;
	const b = new MsbBits();
	let width = 9;
	for (let t = 0; t < tables; t++) {
		b.write(CLEAR, width);
		width = 9;
		let next = 258; // the next code the table will define
		b.write(0, width); // a literal first
		const widen = () => {
			if (next + 1 >= 2 ** width && width < 12) width++;
		};
		widen();
		while (next < 4000) {
			b.write(next, width);
			next++;
			widen();
		}
	}
	b.write(EOI, width);
	return b.finish();
}

/** Rewrites the value of a SHORT or LONG tag in the first IFD of a little-endian classic TIFF (TIFF 6.0, section 2). */
export function patchTiffTag(tiff: ArrayBuffer, tag: number, value: number): ArrayBuffer {
	const copy = tiff.slice(0);
	const v = new DataView(copy);
	const ifd = v.getUint32(4, true);
	const n = v.getUint16(ifd, true);
	for (let i = 0; i < n; i++) {
		const at = ifd + 2 + i * 12;
		if (v.getUint16(at, true) !== tag) continue;
		const type = v.getUint16(at + 2, true);
		if (type === 3) v.setUint16(at + 8, value, true);
		else if (type === 4) v.setUint32(at + 8, value, true);
		else throw new Error(`tag ${tag} has type ${type}, not SHORT or LONG`);
		return copy;
	}
	throw new Error(`tag ${tag} not found`);
}
