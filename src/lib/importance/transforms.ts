/**
 * Per-layer transforms of an importance recipe. Each takes values with NaN for nodata and
 * returns a new array of the same length, NaN kept where the input had no data.
 */
import { cellSizeMetres, ImportanceError, type GridSpec } from './grid';
import type { RecipeStep, TransformName } from './recipe';
import { localStdDev } from './summed-area';

export function validRange(values: Float64Array): { min: number; max: number; count: number } {
	let min = Infinity;
	let max = -Infinity;
	let count = 0;
	for (let i = 0; i < values.length; i++) {
		const v = values[i];
		if (Number.isNaN(v)) continue;
		if (v < min) min = v;
		if (v > max) max = v;
		count++;
	}
	return { min, max, count };
}

/** v as is. */
export function identity(values: Float64Array): Float64Array {
	return Float64Array.from(values);
}

/** max − v: the lowest value becomes the most important (e.g. "dry means important"). */
export function invert(values: Float64Array): Float64Array {
	const { max } = validRange(values);
	return values.map((v) => (Number.isNaN(v) ? NaN : max - v));
}

/**
 * (v − min) / (max − min) over the valid cells. A constant layer carries no contrast; its valid
 * cells all become 1, so that on its own it means "everywhere equally important".
 */
export function minmax(values: Float64Array): Float64Array {
	const { min, max } = validRange(values);
	const span = max - min;
	return values.map((v) => (Number.isNaN(v) ? NaN : span > 0 ? (v - min) / span : 1));
}

/**
 * 1 for lo ≤ v ≤ hi, 0 outside; with soft > 0 the value ramps linearly from 0 at lo − soft to 1 at
 * lo, and from 1 at hi to 0 at hi + soft.
 */
export function band(values: Float64Array, lo: number, hi: number, soft = 0): Float64Array {
	if (!(lo <= hi)) throw new ImportanceError(`band: lower threshold ${lo} exceeds upper threshold ${hi}`);
	if (!(soft >= 0)) throw new ImportanceError(`band: edge width must be 0 or more, not ${soft}`);
	return values.map((v) => {
		if (Number.isNaN(v)) return NaN;
		if (v >= lo && v <= hi) return 1;
		if (soft === 0) return 0;
		const gap = v < lo ? lo - v : v - hi;
		return gap >= soft ? 0 : 1 - gap / soft;
	});
}

/**
 * Window half-sizes in cells for a distance in metres: the nearest whole number of cells, at least
 * one. A distance shorter than half a cell has no neighbours to vary against and is refused.
 */
export function windowCells(grid: GridSpec, distanceM: number): { rx: number; ry: number } {
	const size = cellSizeMetres(grid);
	const rx = Math.round(distanceM / size.x);
	const ry = Math.round(distanceM / size.y);
	if (rx < 1 || ry < 1) {
		throw new ImportanceError(
			`variability: a distance of ${distanceM} m is less than half a cell (${size.x.toFixed(1)} × ${size.y.toFixed(1)} m); choose at least ${Math.ceil(Math.max(size.x, size.y) / 2)} m`
		);
	}
	return { rx, ry };
}

/** Local standard deviation within ±distanceM (a square window of whole cells). */
export function variability(values: Float64Array, grid: GridSpec, distanceM: number): Float64Array {
	const { rx, ry } = windowCells(grid, distanceM);
	return localStdDev(values, grid.width, grid.height, rx, ry);
}

export function applyStep(step: RecipeStep, values: Float64Array, grid: GridSpec): Float64Array {
	switch (step.transform) {
		case 'identity':
			return identity(values);
		case 'invert':
			return invert(values);
		case 'minmax':
			return minmax(values);
		case 'band':
			return band(values, step.params.lo, step.params.hi, step.params.soft);
		case 'variability':
			return variability(values, grid, step.params.distanceM);
	}
}

/**
 * Scale a transformed layer to 0..1 before weighting:
 *  - identity, invert, minmax: min–max over valid cells (a constant layer becomes 1: uniform);
 *  - band: already 0..1 with an absolute meaning (inside / outside the band), kept as is, so a
 *    band that no cell falls into contributes 0 rather than being stretched;
 *  - variability: divided by its maximum, so "no variability" stays 0 (a flat field gives 0).
 */
export function scaleToUnit(transform: TransformName, values: Float64Array): Float64Array {
	if (transform === 'band') return Float64Array.from(values);
	if (transform === 'variability') {
		const { max } = validRange(values);
		return values.map((v) => (Number.isNaN(v) ? NaN : max > 0 ? v / max : 0));
	}
	return minmax(values);
}
