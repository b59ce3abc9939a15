/**
 * Cairnfield's map symbols. Sensor types differ by SHAPE first (circle, square, triangle, diamond,
 * then repeating with a second colour set), colour second; sensor status differs by fill pattern:
 * active = solid fill, faulty = white fill with a cross, retired = hollow dashed outline in grey.
 * So every distinction survives greyscale and any colour-vision deficiency. Pure: strings only.
 */
import type { SensorStatus } from '$lib/api/client';

export const SHAPES = ['circle', 'square', 'triangle', 'diamond'] as const;
export type Shape = (typeof SHAPES)[number];

/** Type colours: dark, saturated, well apart in lightness from each other and from the ramp's mid tones. */
export const TYPE_COLOURS = ['#b2412b', '#6d2f8f', '#0f5a7a', '#7a5a00', '#2e6b2e', '#8a1f5c'] as const;

export interface TypeStyle {
	shape: Shape;
	colour: string;
}

/** Style of the k-th sensor type of a network (k from 0, in id order). */
export function typeStyle(k: number): TypeStyle {
	if (!Number.isInteger(k) || k < 0) throw new RangeError(`sensor type index must be a non-negative integer, not ${k}`);
	return { shape: SHAPES[k % SHAPES.length], colour: TYPE_COLOURS[k % TYPE_COLOURS.length] };
}

/** The outline of a shape in a 20 × 20 box, as SVG markup with the given attributes. */
function shapeElement(shape: Shape, attrs: string): string {
	switch (shape) {
		case 'circle':
			return `<circle cx="10" cy="10" r="7" ${attrs}/>`;
		case 'square':
			return `<rect x="3.5" y="3.5" width="13" height="13" ${attrs}/>`;
		case 'triangle':
			return `<polygon points="10,2.5 18,17 2,17" ${attrs}/>`;
		case 'diamond':
			return `<polygon points="10,1.5 18.5,10 10,18.5 1.5,10" ${attrs}/>`;
	}
}

export const STATUS_LABELS: Record<SensorStatus, string> = {
	active: 'Active (solid)',
	faulty: 'Faulty (white with a cross)',
	retired: 'Retired (hollow, dashed)'
};

/**
 * SVG markup of a sensor symbol, `size` pixels wide. A white halo under every symbol keeps it
 * readable on dark and light parts of the importance raster alike.
 */
export function sensorSymbolSvg(style: TypeStyle, status: SensorStatus, size = 20): string {
	const halo = shapeElement(style.shape, 'fill="none" stroke="#ffffff" stroke-width="4.5" stroke-linejoin="round"');
	let body: string;
	if (status === 'active') {
		body = shapeElement(style.shape, `fill="${style.colour}" stroke="#17211d" stroke-width="1.2" stroke-linejoin="round"`);
	} else if (status === 'faulty') {
		body =
			shapeElement(style.shape, `fill="#ffffff" stroke="${style.colour}" stroke-width="2.2" stroke-linejoin="round"`) +
			`<path d="M7 7 L13 13 M13 7 L7 13" stroke="${style.colour}" stroke-width="2.2" stroke-linecap="round"/>`;
	} else {
		body = shapeElement(style.shape, 'fill="none" stroke="#5b6f67" stroke-width="1.8" stroke-dasharray="2.5 2" stroke-linejoin="round"');
	}
	return `<svg xmlns="http://www.w3.org/2000/svg" width="${size}" height="${size}" viewBox="0 0 20 20" aria-hidden="true">${halo}${body}</svg>`;
}

/**
 * A WGS 84 position in the one order Cairnfield uses everywhere, as its files do (RFC 7946): lon
 * first, then lat, each labelled, in degrees with hemisphere letters. 5 decimals is about a metre.
 */
export function formatLonLat(lon: number, lat: number, decimals = 5): string {
	const f = (v: number, pos: string, neg: string) => `${Math.abs(v).toFixed(decimals)}° ${v >= 0 ? pos : neg}`;
	return `lon ${f(lon, 'E', 'W')}, lat ${f(lat, 'N', 'S')}`;
}

/** Working-CRS metres with no decimals and a thin-space thousands separator. */
export function formatMetres(v: number): string {
	return Math.round(v)
		.toString()
		.replace(/\B(?=(\d{3})+(?!\d))/g, '\u2009');
}

/** Importance share as a percentage with one decimal, or an em dash. */
export function formatShare(share: number | null): string {
	return share === null ? '—' : `${(share * 100).toFixed(1)} %`;
}
