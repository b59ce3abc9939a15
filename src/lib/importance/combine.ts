/**
 * Turn aligned layers into one importance surface: each recipe step transforms its layer, the
 * result is scaled to 0..1 (scaleToUnit), and the scaled layers are summed with weights
 * normalised to add up to 1. Importance is therefore in 0..1; a cell without data in any layer
 * the recipe uses is NaN (nodata) in the output.
 */
import { ImportanceError, sameGrid, toNaNArray, type GridBand, type GridSpec } from './grid';
import { recipeSchema, type Recipe, type RecipeInput } from './recipe';
import { applyStep, scaleToUnit } from './transforms';

export interface ImportanceSurface {
	grid: GridSpec;
	/** Importance 0..1 per cell; NaN = nodata. */
	data: Float32Array;
	/** Cells with a value. */
	validCount: number;
}

export type BandLookup = ReadonlyMap<string, GridBand> | Readonly<Record<string, GridBand>>;

function lookup(bands: BandLookup, id: string): GridBand | undefined {
	if (bands instanceof Map) return bands.get(id);
	return Object.prototype.hasOwnProperty.call(bands, id) ? (bands as Record<string, GridBand>)[id] : undefined;
}

export function combineLayers(recipeInput: Recipe | RecipeInput, bands: BandLookup): ImportanceSurface {
	const parsed = recipeSchema.safeParse(recipeInput);
	if (!parsed.success) {
		const first = parsed.error.issues[0];
		throw new ImportanceError(`Invalid recipe: ${first.path.join('.') || 'recipe'}: ${first.message}`);
	}
	const recipe = parsed.data;
	let grid: GridSpec | null = null;
	let firstId = '';
	for (const step of recipe.layers) {
		const band = lookup(bands, step.layerId);
		if (!band) throw new ImportanceError(`Layer ${step.layerId} used by the recipe is not available`);
		if (grid === null) {
			grid = band.grid;
			firstId = step.layerId;
		} else if (!sameGrid(grid, band.grid)) {
			throw new ImportanceError(`Layer ${step.layerId} is not on the grid of layer ${firstId}; align it first (alignToGrid)`);
		}
	}
	if (grid === null) throw new ImportanceError('a recipe needs at least one layer');
	const n = grid.width * grid.height;
	const totalWeight = recipe.layers.reduce((s, l) => s + l.weight, 0);
	const acc = new Float64Array(n);
	for (const step of recipe.layers) {
		const band = lookup(bands, step.layerId) as GridBand;
		const scaled = scaleToUnit(step.transform, applyStep(step, toNaNArray(band), grid));
		const w = step.weight / totalWeight;
		for (let i = 0; i < n; i++) acc[i] += w * scaled[i]; // NaN propagates: nodata anywhere → nodata
	}
	const data = new Float32Array(n);
	let validCount = 0;
	for (let i = 0; i < n; i++) {
		const v = acc[i];
		if (Number.isNaN(v)) {
			data[i] = NaN;
		} else {
			data[i] = Math.min(1, Math.max(0, v)); // clamp rounding just outside 0..1
			validCount++;
		}
	}
	return { grid: { ...grid }, data, validCount };
}
