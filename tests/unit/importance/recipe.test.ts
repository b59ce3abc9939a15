import { describe, expect, it } from 'vitest';
import { parseRecipe } from '../../../src/lib/importance';

describe('parseRecipe', () => {
	it('accepts a recipe with every transform and fills defaults', () => {
		const res = parseRecipe({
			layers: [
				{ layerId: 'moisture', transform: 'invert', weight: 2 },
				{ layerId: 'moisture', transform: 'variability', weight: 1, params: { distanceM: 500 } },
				{ layerId: 'ndvi', transform: 'band', weight: 0.5, params: { lo: 0.2, hi: 0.6 } },
				{ layerId: 'dem', transform: 'minmax', weight: 1, params: {} },
				{ layerId: 'dem', transform: 'identity', weight: 1 }
			]
		});
		expect(res.ok).toBe(true);
		if (res.ok) {
			expect(res.recipe.layers[2]).toEqual({ layerId: 'ndvi', transform: 'band', weight: 0.5, params: { lo: 0.2, hi: 0.6, soft: 0 } });
			expect(res.recipe.layers[0].params).toEqual({});
		}
	});

	it.each([
		[{ layers: [] }, 'layers', 'a recipe needs at least one layer'],
		[{ layers: [{ layerId: 'a', transform: 'log', weight: 1 }] }, 'layers.0.transform', 'transform must be one of identity, invert, minmax, band, variability'],
		[{ layers: [{ layerId: 'a', transform: 'identity', weight: 0 }] }, 'layers.0.weight', 'weight must be greater than 0'],
		[{ layers: [{ layerId: 'a', transform: 'identity', weight: -1 }] }, 'layers.0.weight', 'weight must be greater than 0'],
		[{ layers: [{ layerId: '', transform: 'identity', weight: 1 }] }, 'layers.0.layerId', 'layerId must not be empty'],
		[{ layers: [{ layerId: 'a', transform: 'band', weight: 1, params: { lo: 5, hi: 1 } }] }, 'layers.0.params.lo', 'band lower threshold (lo) must not exceed the upper threshold (hi)'],
		[{ layers: [{ layerId: 'a', transform: 'band', weight: 1, params: { lo: 0, hi: 1, soft: -1 } }] }, 'layers.0.params.soft', 'band edge width (soft) must be 0 or more'],
		[{ layers: [{ layerId: 'a', transform: 'variability', weight: 1, params: { distanceM: 0 } }] }, 'layers.0.params.distanceM', 'variability distance (distanceM) must be greater than 0'],
		[{ layers: [{ layerId: 'a', transform: 'variability', weight: 1, params: {} }] }, 'layers.0.params.distanceM', 'variability distance (distanceM) must be a number'],
		[{ layers: [{ layerId: 'a', transform: 'identity', weight: Infinity }] }, 'layers.0.weight', 'weight must be a number']
	])('refuses %j at %s with a readable message', (input, path, message) => {
		const res = parseRecipe(input);
		expect(res.ok).toBe(false);
		if (!res.ok) expect(res.issues).toContainEqual({ path, message });
	});

	it('refuses unknown keys and a non-object', () => {
		expect(parseRecipe({ layers: [{ layerId: 'a', transform: 'identity', weight: 1, params: { x: 1 } }] }).ok).toBe(false);
		expect(parseRecipe(null).ok).toBe(false);
		expect(parseRecipe({ layers: [], extra: 1 }).ok).toBe(false);
	});
});
