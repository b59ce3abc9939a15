/**
 * Cairnfield's own colour ramp for layers and importance maps ("moorland": pale straw → sand →
 * lichen → slate teal → deep ink). Its control colours were chosen so that CIE L* falls steadily
 * from about 94 to about 11: the ramp reads in order by lightness alone, so it stays readable for
 * people with any form of colour-vision deficiency and in greyscale print. Hues stay on the
 * yellow–blue axis, which red–green deficient viewers still tell apart.
 * Low values are light, high values dark (wet soil is dark; important cells stand out).
 * Pure: usable in the browser and on the server.
 */
export type Rgb = readonly [number, number, number];

export const RAMP_NAMES = ['moorland', 'moorland-reversed'] as const;
export type RampName = (typeof RAMP_NAMES)[number];

/** Control colours from the lowest value to the highest, evenly spaced. */
const MOORLAND: readonly Rgb[] = [
	[0xf7, 0xed, 0xc4], // pale straw, L* 93.6
	[0xe2, 0xc8, 0x86], // sand, L* 81.4
	[0xa9, 0xae, 0x78], // lichen, L* 69.5
	[0x5f, 0x8f, 0x7e], // sage teal, L* 55.7
	[0x2d, 0x65, 0x70], // slate teal, L* 39.6
	[0x1d, 0x3a, 0x55], // deep blue, L* 23.5
	[0x16, 0x1d, 0x33] // ink, L* 11.2
];

export function rampStops(name: RampName = 'moorland'): readonly Rgb[] {
	if (name === 'moorland') return MOORLAND;
	if (name === 'moorland-reversed') return [...MOORLAND].reverse();
	throw new RangeError(`unknown colour ramp ${JSON.stringify(name)}; use one of ${RAMP_NAMES.join(', ')}`);
}

/** Colour at t in 0..1 (clamped), linear interpolation in sRGB between neighbouring stops. */
export function rampColour(t: number, name: RampName = 'moorland'): Rgb {
	const stops = rampStops(name);
	const x = Number.isFinite(t) ? Math.min(1, Math.max(0, t)) : 0;
	const pos = x * (stops.length - 1);
	const k = Math.min(stops.length - 2, Math.floor(pos));
	const f = pos - k;
	const a = stops[k];
	const b = stops[k + 1];
	return [Math.round(a[0] + (b[0] - a[0]) * f), Math.round(a[1] + (b[1] - a[1]) * f), Math.round(a[2] + (b[2] - a[2]) * f)];
}

/** A 256-entry RGB lookup table (768 bytes) for fast rendering. */
export function rampTable(name: RampName = 'moorland'): Uint8Array {
	const lut = new Uint8Array(256 * 3);
	for (let i = 0; i < 256; i++) {
		const [r, g, b] = rampColour(i / 255, name);
		lut[i * 3] = r;
		lut[i * 3 + 1] = g;
		lut[i * 3 + 2] = b;
	}
	return lut;
}

export function toHex([r, g, b]: Rgb): string {
	return `#${[r, g, b].map((v) => v.toString(16).padStart(2, '0')).join('')}`;
}

export interface LegendStop {
	value: number;
	colour: string;
}

/**
 * Evenly spaced legend entries from min to max (default 5) with the ramp colour of each; a
 * constant layer (min = max) gets one stop. Values are rounded to 4 significant digits.
 */
export function legendStops(min: number, max: number, opts: { ramp?: RampName; count?: number } = {}): LegendStop[] {
	if (!Number.isFinite(min) || !Number.isFinite(max)) throw new RangeError('legend range must be finite numbers');
	if (min > max) throw new RangeError(`legend minimum ${min} exceeds maximum ${max}`);
	const count = opts.count ?? 5;
	if (!Number.isInteger(count) || count < 2) throw new RangeError('a legend needs at least 2 stops');
	if (min === max) return [{ value: min, colour: toHex(rampColour(0.5, opts.ramp)) }];
	return Array.from({ length: count }, (_, k) => {
		const t = k / (count - 1);
		return { value: Number((min + (max - min) * t).toPrecision(4)), colour: toHex(rampColour(t, opts.ramp)) };
	});
}
