/**
 * The built-in job kinds against the services they call: layer processing (the upload request
 * stores the file and queues the job; the job, in a pool thread, makes the layer ready or removes a
 * refused one and fails with the reason), recipe previews, recipe versions, zones, placements.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { encodeTiff } from '../../src/bench/support/tiff-writer';
import { closeThreadPools, getJob, registerJobKind, runQueuedJobs } from '../../src/lib/server/jobs';
import { MAP_IMPORTANCE } from '../../src/lib/server/jobs/kinds';
import { recipePreviewKind } from '../../src/lib/server/jobs/kinds/recipe-preview';
import { readMapImportanceView } from '../../src/lib/server/services/map-importance';
import { registerBuiltInJobKinds } from '../../src/lib/server/jobs/kinds';
import { acceptLayerUpload, layerPreview } from '../../src/lib/server/services/layers';
import { createNetwork } from '../../src/lib/server/services/networks';
import { queueRecipePreview } from '../../src/lib/server/services/recipe-previews';
import { ImportancePending, networkImportance, saveRecipeVersion, useRecipeVersion } from '../../src/lib/server/services/importance';
import { queueComputedZones, queueSharesOfNewZoneSet, queueZoneShares } from '../../src/lib/server/services/zone-jobs';
import { queueRecipeVersion } from '../../src/lib/server/services/recipe-versions';
import { findNetwork } from '../../src/lib/server/repositories/networks';
import { enqueueJob } from '../../src/lib/server/jobs';
import { importanceForZones } from '../../src/lib/server/services/zones';
import { place } from '../../src/lib/engine';
import { createTestDatabase, makeMember, type TestDb } from '../helpers/db';
import { demoFile, fsTestStore, streamOf, type TestStore } from './layers-support';

const limits = { maxBytes: 10 * 1024 * 1024, maxPixels: 25_000_000 };

describe('layer processing job', () => {
	let t: TestDb;
	let s: TestStore;
	let ctx: { networkId: number; organisationId: number; actorId: number };
	beforeAll(async () => {
		registerBuiltInJobKinds();
		t = await createTestDatabase();
		s = await fsTestStore();
		const analyst = await makeMember(t.db, 'analyst');
		const networkId = await createNetwork(t.db, analyst.organisationId, analyst.userId, { name: 'Jobs layers', description: '', crsEpsg: 32754, publicText: '' });
		ctx = { networkId, organisationId: analyst.organisationId, actorId: analyst.userId };
	});
	afterAll(async () => {
		await closeThreadPools();
		await s?.close();
		await t?.drop();
	});

	it('acceptLayerUpload answers with a processing layer and a queued job; the job makes it ready', async () => {
		const bytes = await demoFile('soil-moisture.tif');
		const { layer, job } = await acceptLayerUpload(t.db, s.store, ctx, { name: 'Soil', kind: 'soil_moisture', fileName: 'soil-moisture.tif' }, streamOf(bytes), limits);
		expect(layer.status).toBe('processing');
		expect(layer.width).toBeNull(); // nothing decoded in the request
		expect(job.state).toBe('queued');
		expect(job.kind).toBe('layer-processing');
		await runQueuedJobs(t.db, s.store, { timeoutMs: 60_000 });
		const done = (await getJob(t.db, job.id))!;
		expect(done.state).toBe('finished');
		const row = await t.db('layers').where({ id: layer.id }).first();
		expect(row.status).toBe('ready');
		// data/demo/README.md: 40 × 30 cells of 1 km, EPSG:32754, nodata −9999.
		expect([row.width, row.height, row.epsg, row.nodata]).toEqual([40, 30, 32754, -9999]);
		const png = await layerPreview(t.db, s.store, ctx.networkId, layer.id);
		expect([...png.subarray(0, 8)]).toEqual([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]); // PNG signature (PNG spec §5.2)
		expect(await t.db('audit_log').where({ action: 'layer.create', object_id: String(layer.id) }).first()).toBeTruthy();
	});

	it('the job reads the stored file by byte ranges, a tile at a time, never whole', async () => {
		// 512 × 512 Float32 in 64 × 64 tiles: 1 MiB of samples, 64 tiles of 16 KiB.
		const w = 512;
		const data = Float32Array.from({ length: w * w }, (_, i) => (i % w) + Math.floor(i / w));
		const geo = { tiepoint: [0, 0, 0, 500000, 5500000, 0], pixelScale: [30, 30, 0], geoKeys: [[1024, 1], [1025, 1], [3072, 32633]] as Array<[number, number]> };
		const file = new Uint8Array(encodeTiff({ width: w, height: w, bands: [data], sampleFormat: 3, bitsPerSample: 32, layout: { kind: 'tiles', tileWidth: 64, tileHeight: 64 }, geo }));
		const reads: number[] = [];
		const watched: typeof s.store = Object.assign(Object.create(s.store), {
			getBuffer: async () => {
				throw new Error('the whole file was asked for');
			},
			openRanges: async (key: string) => {
				const r = await s.store.openRanges(key);
				return { read: (o: number, l: number) => (reads.push(l), r.read(o, l)), close: () => r.close() };
			}
		});
		const { layer, job } = await acceptLayerUpload(t.db, s.store, ctx, { name: 'Ramp', kind: 'other', fileName: 'ramp.tif' }, streamOf(file, 64 * 1024), limits);
		await runQueuedJobs(t.db, watched, { timeoutMs: 60_000 });
		const done = (await getJob(t.db, job.id))!;
		expect(done.state).toBe('finished');
		const row = await t.db('layers').where({ id: layer.id }).first();
		expect([row.width, row.height, row.epsg]).toEqual([w, w, 32633]);
		// The ramp x + y over 0…511 each: min 0, max 1022, mean 511 (arithmetic series).
		expect([row.stat_min, row.stat_max, row.stat_mean]).toEqual([0, 1022, 511]);
		expect(reads.length).toBeGreaterThanOrEqual(64);
		// No read larger than a few tiles (a tile is 16 KiB; the file is over 1 MiB).
		expect(Math.max(...reads)).toBeLessThan(file.byteLength / 16);
	});

	it('a raster the job refuses leaves no row and no object, and the job fails with the reason', async () => {
		const keysBefore = (await s.keys()).length;
		const rowsBefore = (await t.db('layers').count({ n: '*' }))[0].n;
		const plain = encodeTiff({ width: 4, height: 3, bands: [Array.from({ length: 12 }, (_, i) => i)], sampleFormat: 3, bitsPerSample: 32 });
		const { job } = await acceptLayerUpload(t.db, s.store, ctx, { name: 'Scan', kind: 'other', fileName: 'scan.tif' }, streamOf(new Uint8Array(plain)), limits);
		await runQueuedJobs(t.db, s.store, { timeoutMs: 60_000 });
		const done = (await getJob(t.db, job.id))!;
		expect(done.state).toBe('failed');
		expect(done.attempts).toBe(1); // a refusal is not retried
		expect(done.error).toMatch(/no georeferencing/);
		expect((await t.db('layers').count({ n: '*' }))[0].n).toBe(rowsBefore);
		expect((await s.keys()).length).toBe(keysBefore);
	});

	it('a recipe preview is a job: the same definition twice is one job, and its result is the preview', async () => {
		const [layer] = await t.db('layers').where({ network_id: ctx.networkId, status: 'ready' }).select('id');
		const definition = { layers: [{ layerId: String(layer.id), transform: 'minmax', weight: 1 }] };
		const a = await queueRecipePreview(t.db, ctx.networkId, ctx.actorId, definition);
		const b = await queueRecipePreview(t.db, ctx.networkId, ctx.actorId, definition);
		expect(b.id).toBe(a.id);
		expect(a.state).toBe('queued');
		await runQueuedJobs(t.db, s.store, { timeoutMs: 60_000 });
		const done = (await getJob(t.db, a.id))!;
		expect(done.state).toBe('finished');
		const preview = (done.result as { preview: { png: string; grid: { width: number; height: number }; min: number; max: number } }).preview;
		expect([...Buffer.from(preview.png, 'base64').subarray(0, 8)]).toEqual([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]); // PNG signature (PNG spec §5.2)
		expect([preview.grid.width, preview.grid.height]).toEqual([40, 30]); // the demo soil moisture grid (data/demo/README.md)
		expect(preview.min).toBeCloseTo(0, 6); // minmax stretches to 0..1
		expect(preview.max).toBeCloseTo(1, 6);
		// A recipe naming a missing layer is refused in the request, with no job.
		await expect(queueRecipePreview(t.db, ctx.networkId, ctx.actorId, { layers: [{ layerId: '999999', transform: 'identity', weight: 1 }] })).rejects.toMatchObject({ status: 422 });
	});

	it('computed zones and zone shares are jobs: k zones whose shares sum to 1, measured again on request', async () => {
		const network = (await findNetwork(t.db, ctx.networkId))!;
		await expect(queueComputedZones(t.db, network, ctx.actorId, '', 3)).rejects.toMatchObject({ status: 422, code: 'no_importance' });
		const [layer] = await t.db('layers').where({ network_id: ctx.networkId, status: 'ready' }).select('id');
		const v = await saveRecipeVersion(t.db, s.store, ctx.networkId, ctx.organisationId, ctx.actorId, { name: 'Wet', definition: { layers: [{ layerId: String(layer.id), transform: 'minmax', weight: 1 }] } });
		await useRecipeVersion(t.db, ctx.networkId, ctx.organisationId, ctx.actorId, v.id);
		const job = await queueComputedZones(t.db, network, ctx.actorId, 'Three', 3);
		expect(await t.db('zone_sets').where({ network_id: ctx.networkId }).count({ n: '*' }).first()).toMatchObject({ n: 0 }); // nothing computed in the request
		await runQueuedJobs(t.db, s.store, { timeoutMs: 60_000 });
		const done = (await getJob(t.db, job.id))!;
		expect(done.state).toBe('finished');
		const zoneSetId = (done.result as { zoneSetId: number }).zoneSetId;
		const zones = await t.db('zones').where({ zone_set_id: zoneSetId }).select('importance_share');
		expect(zones.length).toBe(3);
		// Shares are fractions of the importance mass over a partition: they sum to 1 (definition of a share).
		expect(zones.reduce((a: number, z: { importance_share: number }) => a + Number(z.importance_share), 0)).toBeCloseTo(1, 6);
		await t.db('zones').where({ zone_set_id: zoneSetId }).update({ importance_share: null });
		const measure = await queueZoneShares(t.db, network, ctx.actorId, zoneSetId);
		await runQueuedJobs(t.db, s.store, { timeoutMs: 60_000 });
		expect((await getJob(t.db, measure.id))!.state).toBe('finished');
		const again = await t.db('zones').where({ zone_set_id: zoneSetId }).select('importance_share');
		expect(again.reduce((a: number, z: { importance_share: number }) => a + Number(z.importance_share), 0)).toBeCloseTo(1, 6);
		await expect(queueZoneShares(t.db, network, ctx.actorId, 999999)).rejects.toMatchObject({ status: 404 });
	});

	it('a stored zone set gets its shares from a job, and only when there is an importance to measure', async () => {
		const network = (await findNetwork(t.db, ctx.networkId))!;
		const [set] = await t.db('zone_sets').where({ network_id: ctx.networkId }).select('id');
		await t.db('zones').where({ zone_set_id: set.id }).update({ importance_share: null });
		const job = (await queueSharesOfNewZoneSet(t.db, network, ctx.actorId, set.id))!;
		expect(job.kind).toBe('zones');
		await runQueuedJobs(t.db, s.store, { timeoutMs: 60_000 });
		expect((await getJob(t.db, job.id))!.state).toBe('finished');
		const zones = await t.db('zones').where({ zone_set_id: set.id }).select('importance_share');
		// Shares over a partition of the importance sum to 1 (definition of a share).
		expect(zones.reduce((a: number, z: { importance_share: number }) => a + Number(z.importance_share), 0)).toBeCloseTo(1, 6);
		const bare = await createNetwork(t.db, ctx.organisationId, ctx.actorId, { name: 'No recipe', description: '', crsEpsg: 32754, publicText: '' });
		expect(await queueSharesOfNewZoneSet(t.db, (await findNetwork(t.db, bare))!, ctx.actorId, set.id)).toBeNull();
	});

	it('a missing stored surface is not computed in a request: the request queues its job and hears "being computed"', async () => {
		const before = (await networkImportance(t.db, s.store, ctx.networkId, { compute: false }))!;
		const version = await t.db('importance_recipe_versions').where({ id: before.recipeVersionId }).first();
		await s.store.delete(version.surface_key);
		const keysBefore = (await s.keys()).length;
		const first = await networkImportance(t.db, s.store, ctx.networkId, { compute: false }).catch((e) => e);
		expect(first).toBeInstanceOf(ImportancePending);
		expect(first).toMatchObject({ status: 409, code: 'importance_pending', versionId: before.recipeVersionId });
		expect((await s.keys()).length).toBe(keysBefore); // nothing computed or stored by the request
		const second = await networkImportance(t.db, s.store, ctx.networkId, { compute: false }).catch((e) => e);
		expect(second.jobId).toBe(first.jobId); // asked twice, one job
		const job = (await getJob(t.db, first.jobId))!;
		expect([job.kind, job.state]).toEqual(['recipe-version', 'queued']);
		await runQueuedJobs(t.db, s.store, { timeoutMs: 60_000 });
		expect((await getJob(t.db, first.jobId))!).toMatchObject({ state: 'finished', result: { versionId: before.recipeVersionId } });
		const after = (await networkImportance(t.db, s.store, ctx.networkId, { compute: false }))!;
		// The same recipe on the same layers gives the same surface (computed once per version).
		expect([after.validCount, after.min, after.max]).toEqual([before.validCount, before.min, before.max]);
		expect(Buffer.from(after.band.data.buffer).equals(Buffer.from(before.band.data.buffer))).toBe(true);
	});

	it('a recipe version is saved by a job with its surface; a name already taken is refused in the request', async () => {
		const [layer] = await t.db('layers').where({ network_id: ctx.networkId, status: 'ready' }).select('id');
		const definition = { layers: [{ layerId: String(layer.id), transform: 'invert', weight: 1 }] };
		const job = await queueRecipeVersion(t.db, ctx.networkId, ctx.organisationId, ctx.actorId, { name: 'Dry', definition });
		expect(await t.db('importance_recipes').where({ network_id: ctx.networkId, name: 'Dry' }).first()).toBeUndefined(); // nothing saved by the request
		await runQueuedJobs(t.db, s.store, { timeoutMs: 60_000 });
		const done = (await getJob(t.db, job.id))!;
		expect(done.state).toBe('finished');
		const version = (done.result as { version: { id: number; version: number } }).version;
		expect(version.version).toBe(1);
		const row = await t.db('importance_recipe_versions').where({ id: version.id }).first();
		expect(await s.store.exists(row.surface_key)).toBe(true);
		// Its finished step queued the version's map image in the network's working CRS (32754, set
		// explicitly), which the same drain drew: a map request finds it ready.
		const mapJob = await t.db('jobs').where({ kind: MAP_IMPORTANCE, idempotency_key: `${MAP_IMPORTANCE}:${version.id}:32754` }).first();
		expect(mapJob?.state).toBe('finished');
		expect(await readMapImportanceView(s.store, version.id, 32754)).toMatchObject({ min: expect.any(Number), max: expect.any(Number) });
		await expect(queueRecipeVersion(t.db, ctx.networkId, ctx.organisationId, ctx.actorId, { name: 'Dry', definition })).rejects.toMatchObject({ status: 409, code: 'name_taken' });
	});

	it('the importance kinds compute in a heap-limited pool thread: over the limit the job fails with a readable message and the worker goes on', async () => {
		// A recipe preview run under a heap limit too small for its thread (resourceLimits bound the
		// JS heap; the thread's own start-up needs more than 4 MB, so this fails on every machine),
		// beside the same preview under the kind's own limit, in one worker with one job at a time.
		// The recipe-version, zones and map-importance kinds run their work through the same runner.
		registerJobKind({ ...recipePreviewKind, kind: 'test-preview-tight', limits: { ...recipePreviewKind.limits, memoryMb: 4 }, maxAttempts: 1 });
		const [layer] = await t.db('layers').where({ network_id: ctx.networkId, status: 'ready' }).select('id');
		const definition = { layers: [{ layerId: String(layer.id), transform: 'invert', weight: 2 }] };
		const tight = await enqueueJob(t.db, { kind: 'test-preview-tight', payload: { networkId: ctx.networkId, definition }, networkId: ctx.networkId, priority: 20 });
		const normal = await queueRecipePreview(t.db, ctx.networkId, ctx.actorId, definition);
		await runQueuedJobs(t.db, s.store, { kinds: ['test-preview-tight', 'recipe-preview'], concurrency: 1, timeoutMs: 120_000 });
		const failed = (await getJob(t.db, tight.id))!;
		expect(failed.state).toBe('failed');
		expect(failed.error).toBe('The computation needed more than its memory limit of 4 MB and was stopped.');
		expect(failed.attempts).toBe(1);
		expect((await getJob(t.db, normal.id))!.state).toBe('finished');
	}, 180_000);

	it('a placement job runs the engine on the network importance, reports its iterations, and returns what place() returns', async () => {
		// Needs the recipe chosen by the zones test above.
		const options = { strategy: 'lloyd' as const, count: 5, radius: 3000, maxIterations: 20, tolerance: 0, seed: 7 };
		const job = await enqueueJob(t.db, { kind: 'placement', payload: { networkId: ctx.networkId, options }, networkId: ctx.networkId });
		await runQueuedJobs(t.db, s.store, { timeoutMs: 120_000 });
		const done = (await getJob(t.db, job.id))!;
		expect(done.state).toBe('finished');
		expect(done.progress).toMatchObject({ iteration: 20, maxIterations: 20 });
		const result = done.result as { sensors: { id: string; x: number; y: number }[]; coverage: number; iterations: number };
		expect(result.iterations).toBe(20);
		expect(result.sensors.length).toBe(5);
		// The same engine call in this process on the same grid gives the same sites (place() is deterministic for a seed).
		const grid = (await importanceForZones(t.db, s.store, (await findNetwork(t.db, ctx.networkId))!))!.grid;
		const direct = place(grid, null, [], options);
		expect(result.sensors.map((p) => [p.id, p.x, p.y])).toEqual(direct.sensors.map((p) => [p.id, p.x, p.y]));
		expect(result.coverage).toBeCloseTo(direct.coverage, 12);
	});

	it('bad metadata is refused in the request: no row, no object, no job', async () => {
		const jobsBefore = (await t.db('jobs').count({ n: '*' }))[0].n;
		await expect(acceptLayerUpload(t.db, s.store, ctx, { name: '', kind: 'other' }, streamOf(new Uint8Array(10)), limits)).rejects.toMatchObject({ status: 400, field: 'name' });
		expect((await t.db('jobs').count({ n: '*' }))[0].n).toBe(jobsBefore);
	});
});
