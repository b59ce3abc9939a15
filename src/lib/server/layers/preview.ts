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

/** Mean of valid source cells in each output pixel's block (NaN where the block has none). */
export function downsample(src: PreviewSource, outW: number, outH: number): Float64Array {
	const { width, height, data, nodata } = src;
	const out = new Float64Array(outW * outH);
	for (let j = 0; j < outH; j++) {
		const r0 = Math.floor((j * height) / outH);
		const r1 = Math.max(r0 + 1, Math.floor(((j + 1) * height) / outH));
		for (let i = 0; i < outW; i++) {
			const c0 = Math.floor((i * width) / outW);
			const c1 = Math.max(c0 + 1, Math.floor(((i + 1) * width) / outW));
			let sum = 0;
			let n = 0;
			for (let r = r0; r < r1; r++) {
				for (let c = c0; c < c1; c++) {
					const v = data[r * width + c];
					if (valid(v, nodata)) {
						sum += v;
						n++;
					}
				}
			}
			out[j * outW + i] = n > 0 ? sum / n : NaN;
		}
	}
	return out;
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
	const values = downsample(band, size.width, size.height);
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
	return { png: rampPng(values, size.width, size.height, min, max, opts.ramp), width: size.width, height: size.height, min, max };
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
