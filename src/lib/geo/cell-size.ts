/**
 * The working grid's cell size: fine enough for the smallest sensing radius, coarse enough that
 * the study area fits a cell-count budget, never finer than the raster's own pixels.
 *
 * The rule, in order:
 *   1. by radius   s_r = r_min / RADIUS_CELLS: a sensing disk of the smallest radius spans about
 *                  2·RADIUS_CELLS cells across (≈ 314 cells of area at 10), plenty for its mass
 *                  and centroid;
 *   2. by budget   s_b = √(extent area / budget): the study area's bounding box (or the raster's
 *                  extent without one) holds at most `budget` cells (default CELL_BUDGET);
 *   3. by pixel    s_p = the raster's pixel size in the working CRS: a coarser pixel than the cell
 *                  would only repeat values, it adds nothing.
 *   The cell size is max(s_r, s_b, s_p), rounded up to two significant digits (3.47 m → 3.5 m),
 *   except that a pixel-sized cell keeps the pixel's exact size so the grid can align with it.
 * A requested size (--cell-size, the web form) replaces 1 and 2; 3 still holds, and the choice
 * says so. The choice is a plain object, recorded with the grid (the CLI prints it under
 * `placement.cell_size`).
 */

/** Cells across a sensing radius (rule 1). */
export const RADIUS_CELLS = 10;
/** Default cell-count budget (rule 2): a Lloyd iteration costs about 1 ms at a million cells. */
export const CELL_BUDGET = 1_000_000;

export type CellSizeRule = 'radius' | 'budget' | 'pixel' | 'requested';

export interface CellSizeInput {
	/** The raster's pixel size in working metres (√ of a pixel's area, or its longer side). */
	pixelSize: number;
	/** Extent (study area's bounding box, else the raster's) in working metres. */
	extentWidth: number;
	extentHeight: number;
	/** Smallest sensing radius in metres, if known. */
	smallestRadius?: number | null;
	budget?: number;
	/** A cell size asked for by the user. */
	requested?: number | null;
}

export interface CellSizeChoice {
	/** Cell side in metres. */
	cellSize: number;
	/** Which rule decided it. */
	rule: CellSizeRule;
	requested: number | null;
	pixelSize: number;
	smallestRadius: number | null;
	budget: number;
	/** One sentence for people: why this size. */
	reason: string;
}

export class CellSizeError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'CellSizeError';
	}
}

/** Round up to two significant digits: 3.47 → 3.5, 18.01 → 19, 1234 → 1300. */
export function roundUpTwoDigits(v: number): number {
	if (!(v > 0) || !Number.isFinite(v)) return v;
	const p = 10 ** (Math.floor(Math.log10(v)) - 1);
	const r = Math.ceil(v / p - 1e-9) * p;
	return Number(r.toPrecision(2));
}

function fmt(v: number): string {
	return `${Number(v.toPrecision(4))} m`;
}

export function chooseCellSize(input: CellSizeInput): CellSizeChoice {
	const budget = input.budget ?? CELL_BUDGET;
	const { pixelSize, extentWidth: w, extentHeight: h } = input;
	const radius = input.smallestRadius ?? null;
	const requested = input.requested ?? null;
	if (!(pixelSize > 0) || !Number.isFinite(pixelSize)) throw new CellSizeError(`the raster's pixel size (${pixelSize}) is not a positive length`);
	if (!(w > 0 && h > 0)) throw new CellSizeError('the area to cover is empty');
	if (!Number.isInteger(budget) || budget < 1) throw new CellSizeError(`the cell budget must be a positive whole number, not ${budget}`);
	if (radius !== null && !(radius > 0)) throw new CellSizeError(`the smallest sensing radius must be positive, not ${radius}`);
	if (requested !== null && !(requested > 0 && Number.isFinite(requested))) throw new CellSizeError(`the cell size must be a positive number of metres, not ${requested}`);
	const base = { requested, pixelSize, smallestRadius: radius, budget };

	if (requested !== null) {
		if (requested < pixelSize) {
			return { ...base, cellSize: pixelSize, rule: 'pixel', reason: `${fmt(requested)} was asked for, but the raster's pixels are ${fmt(pixelSize)}: cells are never finer than the pixels` };
		}
		return { ...base, cellSize: requested, rule: 'requested', reason: `${fmt(requested)} as asked for` };
	}
	const byRadius = radius !== null ? radius / RADIUS_CELLS : 0;
	const byBudget = Math.sqrt((w * h) / budget);
	if (pixelSize >= byRadius && pixelSize >= byBudget) {
		return { ...base, cellSize: pixelSize, rule: 'pixel', reason: `the raster's own pixel size (${fmt(pixelSize)}); finer cells would only repeat its values` };
	}
	let cell = roundUpTwoDigits(Math.max(byRadius, byBudget));
	// Rounding and whole cells at the edges may still overshoot the budget: grow in small steps.
	while (Math.ceil(w / cell) * Math.ceil(h / cell) > budget) cell = roundUpTwoDigits(cell * 1.01);
	if (byRadius >= byBudget) {
		return { ...base, cellSize: cell, rule: 'radius', reason: `1/${RADIUS_CELLS} of the smallest sensing radius (${fmt(radius!)})` };
	}
	return { ...base, cellSize: cell, rule: 'budget', reason: `the ${fmt(w)} × ${fmt(h)} area within a budget of ${budget} cells` };
}
