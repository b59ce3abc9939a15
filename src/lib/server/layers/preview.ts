/**
 * PNG preview of a band: box-averaged down to at most 512 px on the longer side (never enlarged),
 * coloured with Cairnfield's ramp between the band's min and max (or a given range), nodata fully
 * transparent.
 */
import { PNG } from 'pngjs';
import { rampTable, type RampName } from '../../importance/colour-ramp';

export interface PreviewSource {
	width: number;
	height: number;
	data: ArrayLike<number>;
	nodata: number | null;
}

export interface PreviewOptions {
	ramp?: RampName;
	/** Value range mapped onto the ramp; default the band's own valid min..max. */
	range?: { min: number; max: number };
	/** Longest side of the preview in pixels; default 512. */
	maxSize?: number;
}

export interface Preview {
	png: Buffer;
	width: number;
	height: number;
	/** The value range the colours stand for. */
	min: number;
	max: number;
}

export const PREVIEW_MAX_SIZE = 512;

function valid(v: number, nodata: number | null): boolean {
	return Number.isFinite(v) && (nodata === null || v !== nodata);
}

/** Index of the output pixel each of `n` source rows (or columns) falls in, for `out` output pixels (out ≤ n). */
function blockIndex(n: number, out: number): Int32Array {
	const map = new Int32Array(n).fill(-1);
	for (let j = 0; j < out; j++) {
		const a = Math.floor((j * n) / out);
		const b = Math.max(a + 1, Math.floor(((j + 1) * n) / out));
		for (let k = a; k < b && k < n; k++) map[k] = j;
	}
	return map;
}

/**
 * Box-averaged preview values built from a band's rows as they stream by: `add` whole rows from
 * `row0`; `values` is the mean of valid source cells in each output pixel's block (NaN where the
 * block has none). Memory: 16 bytes an output pixel plus one index per source row and column.
 */
export class PreviewAccumulator {
	private readonly sum: Float64Array;
	private readonly count: Float64Array;
	private readonly rowMap: Int32Array;
	private readonly colMap: Int32Array;

	constructor(
		private readonly width: number,
		height: number,
		readonly outW: number,
		readonly outH: number,
		private readonly nodata: number | null
	) {
		this.sum = new Float64Array(outW * outH);
		this.count = new Float64Array(outW * outH);
		this.rowMap = blockIndex(height, outH);
		this.colMap = blockIndex(width, outW);
	}

	add(row0: number, data: Float32Array | Float64Array | ArrayLike<number>): void {
		const W = this.width;
		const rows = data.length / W;
		const nd = this.nodata === null ? NaN : data instanceof Float32Array ? Math.fround(this.nodata) : this.nodata;
		const { sum, count, colMap } = this;
		for (let r = 0; r < rows; r++) {
			const j = this.rowMap[row0 + r];
			if (j < 0) continue;
			const base = j * this.outW;
			const off = r * W;
			for (let c = 0; c < W; c++) {
				const v = data[off + c];
				if (!(v > -Infinity && v < Infinity) || v === nd) continue;
				const k = base + colMap[c];
				sum[k] += v;
				count[k]++;
			}
		}
	}

	values(): Float64Array {
		const out = new Float64Array(this.sum.length);
		for (let k = 0; k < out.length; k++) out[k] = this.count[k] > 0 ? this.sum[k] / this.count[k] : NaN;
		return out;
	}
}

/** Mean of valid source cells in each output pixel's block (NaN where the block has none). */
export function downsample(src: PreviewSource, outW: number, outH: number): Float64Array {
	const acc = new PreviewAccumulator(src.width, src.height, outW, outH, src.nodata);
	acc.add(0, src.data);
	return acc.values();
}

export function previewSize(width: number, height: number, maxSize = PREVIEW_MAX_SIZE): { width: number; height: number } {
	const scale = Math.min(1, maxSize / Math.max(width, height));
	return { width: Math.max(1, Math.round(width * scale)), height: Math.max(1, Math.round(height * scale)) };
}

export function renderPreview(band: PreviewSource, opts: PreviewOptions = {}): Preview {
	if (!(band.width > 0 && band.height > 0) || band.data.length !== band.width * band.height) {
		throw new RangeError(`band of ${band.data.length} values does not match its size ${band.width}×${band.height}`);
	}
	const maxSize = opts.maxSize ?? PREVIEW_MAX_SIZE;
	if (!Number.isInteger(maxSize) || maxSize < 1) throw new RangeError(`maxSize must be a positive integer, not ${maxSize}`);
	const size = previewSize(band.width, band.height, maxSize);
	return previewFromValues(downsample(band, size.width, size.height), size.width, size.height, opts);
}

/** The preview PNG of box-averaged values (from downsample or a PreviewAccumulator). */
export function previewFromValues(values: Float64Array, width: number, height: number, opts: Pick<PreviewOptions, 'ramp' | 'range'> = {}): Preview {
	let min = opts.range?.min ?? Infinity;
	let max = opts.range?.max ?? -Infinity;
	if (!opts.range) {
		for (const v of values) {
			if (Number.isNaN(v)) continue;
			if (v < min) min = v;
			if (v > max) max = v;
		}
	}
	if (!Number.isFinite(min) || !Number.isFinite(max)) {
		min = NaN; // no valid cell: an all-transparent preview
		max = NaN;
	}
	return { png: rampPng(values, width, height, min, max, opts.ramp), width, height, min, max };
}

/**
 * Encodes values (row-major, width × height) as an RGBA PNG through a colour ramp: min..max maps
 * onto the ramp, a flat range onto its middle; NaN and infinite values are transparent.
 */
export function rampPng(values: ArrayLike<number>, width: number, height: number, min: number, max: number, ramp?: RampName): Buffer {
	const lut = rampTable(ramp);
	const png = new PNG({ width, height });
	const span = max - min;
	for (let p = 0; p < width * height; p++) {
		const v = values[p];
		const o = p * 4;
		if (!Number.isFinite(v)) {
			png.data[o] = png.data[o + 1] = png.data[o + 2] = png.data[o + 3] = 0;
			continue;
		}
		const t = span > 0 ? Math.min(1, Math.max(0, (v - min) / span)) : 0.5;
		const k = Math.round(t * 255) * 3;
		png.data[o] = lut[k];
		png.data[o + 1] = lut[k + 1];
		png.data[o + 2] = lut[k + 2];
		png.data[o + 3] = 255;
	}
	return PNG.sync.write(png);
}
