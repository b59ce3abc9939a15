import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createNetwork } from '../../src/lib/server/services/networks';
import { uploadLayer, type LayerView } from '../../src/lib/server/services/layers';
import {
	decodeSurface,
	deleteRecipe,
	encodeSurface,
	listRecipeViews,
	networkImportance,
	previewRecipe,
	saveRecipeVersion,
	surfaceRasterBand,
	targetGrid,
	useRecipeVersion
} from '../../src/lib/server/services/importance';
import { aggregateToWorkingGrid, bandSource } from '../../src/lib/geo/aggregate';
import { createTestDatabase, jsonValue, makeMember, type TestDb } from '../helpers/db';
import { demoFile, geotiffOf, STORES, streamOf, type TestStore } from './layers-support';

const limits = { maxBytes: 10 * 1024 * 1024, maxPixels: 25_000_000 };

describe('surface encoding and target grid', () => {
	it('encodeSurface/decodeSurface round-trip values, NaN and the grid', () => {
		const grid = { epsg: 32632, width: 3, height: 2, x0: 500000, y0: 5800000, dx: 30, dy: 30, units: 'metre' as const };
		const data = Float32Array.from([0, 0.25, NaN, 0.5, 0.75, 1]);
		const back = decodeSurface(encodeSurface({ grid, data, validCount: 5, min: 0, max: 1 }));
		expect(back.grid).toEqual(grid);
		expect([...back.data]).toEqual([...data]);
		expect(() => decodeSurface(new Uint8Array([1, 2, 3]))).toThrow(/not a stored importance surface/);
	});
	it('targetGrid picks the finest grid and coarsens it by a whole factor over the cell limit', () => {
		const coarse = { grid: { epsg: 32632, width: 40, height: 30, x0: 0, y0: 0, dx: 1000, dy: 1000 }, data: [], nodata: null };
		const fine = { grid: { epsg: 32632, width: 200, height: 150, x0: 0, y0: 0, dx: 30, dy: 30 }, data: [], nodata: null };
		expect(targetGrid([coarse, fine])).toEqual(fine.grid);
		// 30 000 cells over a limit of 10 000: factor ceil(sqrt(3)) = 2 → 100 × 75 cells of 60 m.
		expect(targetGrid([coarse, fine], 10_000)).toMatchObject({ width: 100, height: 75, dx: 60, dy: 60 });
	});
});

for (const makeStore of STORES) {
	describe(`importance recipes (${makeStore.name})`, () => {
		let t: TestDb;
		let s: TestStore;
		let ctx: { networkId: number; organisationId: number; actorId: number };
		let soil: LayerView;
		let veg: LayerView;
		let a: LayerView;
		let b: LayerView;
		beforeAll(async () => {
			t = await createTestDatabase();
			s = await makeStore();
			const analyst = await makeMember(t.db, 'analyst');
			const networkId = await createNetwork(t.db, analyst.organisationId, analyst.userId, { name: `Recipes ${s.name}`, description: '', crsEpsg: 32632, publicText: '' });
			ctx = { networkId, organisationId: analyst.organisationId, actorId: analyst.userId };
			const up = async (name: string, bytes: Uint8Array) => uploadLayer(t.db, s.store, ctx, { name, kind: 'other', fileName: `${name}.tif` }, streamOf(bytes), limits);
			soil = await up('soil', await demoFile('soil-moisture.tif'));
			veg = await up('veg', await demoFile('vegetation-index.tif'));
			const g = { epsg: 32632, x0: 500000, y0: 5800000, dx: 10, dy: 10 };
			a = await up('a', geotiffOf([10, 20, 30, 40], 2, 2, g));
			b = await up('b', geotiffOf([40, 30, 20, 10], 2, 2, g));
		});
		afterAll(async () => {
			await s?.close();
			await t?.drop();
		});

		it('preview of weights 1 and 3 on two 2×2 layers equals the hand-computed weighted sum', async () => {
			// a → (0, 1/3, 2/3, 1), b → (1, 2/3, 1/3, 0) after min–max; weights normalise to 1/4, 3/4:
			// 0.75, 0.5833…, 0.4166…, 0.25 (worked by hand).
			const p = await previewRecipe(t.db, s.store, ctx.networkId, {
				layers: [
					{ layerId: String(a.id), transform: 'identity', weight: 1 },
					{ layerId: String(b.id), transform: 'identity', weight: 3 }
				]
			});
			expect(p.validCount).toBe(4);
			expect(p.min).toBeCloseTo(0.25, 6);
			expect(p.max).toBeCloseTo(0.75, 6);
			expect(p.mean).toBeCloseTo((0.75 + 7 / 12 + 5 / 12 + 0.25) / 4, 6);
			expect([...p.png.subarray(1, 4)].map((c) => String.fromCharCode(c)).join('')).toBe('PNG');
			expect((await s.keys()).some((k) => k.startsWith('importance/'))).toBe(false); // a preview stores nothing
		});

		it('a two-layer recipe of different resolutions lands on the finest grid (the 30 m vegetation grid)', async () => {
			const p = await previewRecipe(t.db, s.store, ctx.networkId, {
				layers: [
					{ layerId: String(soil.id), transform: 'invert', weight: 2 },
					{ layerId: String(veg.id), transform: 'minmax', weight: 1 }
				]
			});
			expect(p.grid).toMatchObject({ epsg: 32754, width: 200, height: 150, dx: 30, dy: 30 }); // data/demo/README.md: the demo rasters are in EPSG:32754
			expect(p.validCount).toBeGreaterThan(0);
			expect(p.validCount).toBeLessThan(200 * 150); // the unflown corner is nodata
		});

		it('refuses a recipe citing a missing layer or bad parameters, with a message', async () => {
			await expect(previewRecipe(t.db, s.store, ctx.networkId, { layers: [{ layerId: '999999', transform: 'identity', weight: 1 }] })).rejects.toMatchObject({ status: 422, message: expect.stringMatching(/does not exist/) });
			await expect(previewRecipe(t.db, s.store, ctx.networkId, { layers: [{ layerId: String(a.id), transform: 'band', weight: 1, params: { lo: 5, hi: 1 } }] })).rejects.toMatchObject({ status: 400, message: expect.stringMatching(/lower threshold/) });
			await expect(previewRecipe(t.db, s.store, ctx.networkId, { layers: [] })).rejects.toMatchObject({ status: 400 });
		});

		it('versions are immutable: v2 is a new row and v1 keeps its definition and surface', async () => {
			const def1 = { layers: [{ layerId: String(a.id), transform: 'identity' as const, weight: 1 }, { layerId: String(b.id), transform: 'identity' as const, weight: 1 }] };
			const v1 = await saveRecipeVersion(t.db, s.store, ctx.networkId, ctx.organisationId, ctx.actorId, { name: 'Dry and green', definition: def1, note: 'first' });
			expect(v1.version).toBe(1);
			const v1Row = await t.db('importance_recipe_versions').where({ id: v1.id }).first();
			const def2 = { layers: [def1.layers[0], { ...def1.layers[1], weight: 3 }] };
			const v2 = await saveRecipeVersion(t.db, s.store, ctx.networkId, ctx.organisationId, ctx.actorId, { recipeId: v1.recipeId, definition: def2, note: 'more weight on b' });
			expect(v2.version).toBe(2);
			expect(v2.id).not.toBe(v1.id);
			const v1After = await t.db('importance_recipe_versions').where({ id: v1.id }).first();
			expect(jsonValue(v1After.definition)).toEqual(jsonValue(v1Row.definition));
			expect(v1After.surface_key).toBe(v1Row.surface_key);
			expect(v1After.note).toBe('first');
			// v1's stored surface: equal weights → 0.5 everywhere (a and b are mirror images).
			const s1 = decodeSurface(await s.store.getBuffer(v1Row.surface_key));
			for (const v of s1.data) expect(v).toBeCloseTo(0.5, 6);
			const { recipes } = await listRecipeViews(t.db, ctx.networkId);
			expect(recipes.find((r) => r.id === v1.recipeId)!.versions.map((v) => v.version)).toEqual([2, 1]);
			await expect(saveRecipeVersion(t.db, s.store, ctx.networkId, ctx.organisationId, ctx.actorId, { name: 'Dry and green', definition: def1 })).rejects.toMatchObject({ status: 409, code: 'name_taken' });
			expect(await t.db('audit_log').where({ action: 'recipe.version.create' }).count({ n: '*' })).toEqual([{ n: 2 }]);
		});

		it('a failed save stores no surface and no version', async () => {
			const before = (await s.keys()).length;
			const rows = (await t.db('importance_recipe_versions').count({ n: '*' }))[0].n;
			await expect(saveRecipeVersion(t.db, s.store, ctx.networkId, ctx.organisationId, ctx.actorId, { recipeId: 999999, definition: { layers: [{ layerId: String(a.id), transform: 'identity', weight: 1 }] } })).rejects.toMatchObject({ status: 404 });
			expect((await s.keys()).length).toBe(before);
			expect((await t.db('importance_recipe_versions').count({ n: '*' }))[0].n).toBe(rows);
		});

		it('networkImportance: null until a version is chosen, then the surface; computed once and cached', async () => {
			expect(await networkImportance(t.db, s.store, ctx.networkId)).toBeNull();
			const v = await saveRecipeVersion(t.db, s.store, ctx.networkId, ctx.organisationId, ctx.actorId, {
				name: 'Weighted',
				definition: { layers: [{ layerId: String(a.id), transform: 'identity', weight: 1 }, { layerId: String(b.id), transform: 'identity', weight: 3 }] }
			});
			await useRecipeVersion(t.db, ctx.networkId, ctx.organisationId, ctx.actorId, v.id);
			expect((await t.db('networks').where({ id: ctx.networkId }).first()).recipe_version_id).toBe(v.id);
			expect(await t.db('audit_log').where({ action: 'network.recipe_version', object_id: String(ctx.networkId) }).first()).toBeTruthy();

			// Drop the cache, so the first call must compute and store it.
			const key = (await t.db('importance_recipe_versions').where({ id: v.id }).first()).surface_key;
			await t.db('importance_recipe_versions').where({ id: v.id }).update({ surface_key: null });
			await s.store.delete(key);
			const first = await networkImportance(t.db, s.store, ctx.networkId);
			expect(first).not.toBeNull();
			expect(first!.recipeVersionId).toBe(v.id);
			expect(first!.epsg).toBe(32632);
			expect(first!.grid).toMatchObject({ width: 2, height: 2, dx: 10, dy: 10 });
			expect([...first!.band.data].map((x) => Number(x.toFixed(4)))).toEqual([0.75, 0.5833, 0.4167, 0.25]);
			const cached = (await t.db('importance_recipe_versions').where({ id: v.id }).first()).surface_key;
			expect(cached).toMatch(/^importance\//);
			expect(await s.store.exists(cached)).toBe(true);
			const keysAfterFirst = (await s.keys()).length;
			const second = await networkImportance(t.db, s.store, ctx.networkId);
			expect([...second!.band.data]).toEqual([...first!.band.data]);
			expect((await t.db('importance_recipe_versions').where({ id: v.id }).first()).surface_key).toBe(cached);
			expect((await s.keys()).length).toBe(keysAfterFirst); // nothing new stored

			// The RasterBand form feeds the aggregation into a working grid: mass sums to 1 over the 4 cells.
			const wg = await aggregateToWorkingGrid(bandSource(surfaceRasterBand(first!)), { crs: 32632 });
			expect(wg.grid.mass.reduce((x, y) => x + y, 0)).toBeCloseTo(1, 9);
		});

		it('deleteRecipe is refused while the network uses one of its versions', async () => {
			const { recipes, currentVersionId } = await listRecipeViews(t.db, ctx.networkId);
			const inUse = recipes.find((r) => r.versions.some((v) => v.id === currentVersionId))!;
			await expect(deleteRecipe(t.db, s.store, ctx.networkId, ctx.organisationId, ctx.actorId, inUse.id)).rejects.toMatchObject({ status: 409, code: 'recipe_in_use' });
			const other = recipes.find((r) => r.id !== inUse.id)!;
			await deleteRecipe(t.db, s.store, ctx.networkId, ctx.organisationId, ctx.actorId, other.id);
			expect(await t.db('importance_recipes').where({ id: other.id }).first()).toBeUndefined();
		});
	});
}
