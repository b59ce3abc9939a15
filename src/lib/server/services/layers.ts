/**
 * Layers as a use case: upload a GeoTIFF (streamed to the object store with a byte limit),
 * inspect it, store its preview, list, delete.
 *
 * An upload goes uploading → processing → ready. The request stores the file (storeLayerUpload)
 * and queues a layer-processing job, which calls processLayer. Whatever refuses it (too large, not
 * a TIFF, no georeferencing, unknown CRS, all nodata, band missing, too many pixels, corrupt
 * compression) removes the stored objects and the row again: a refused upload leaves nothing
 * behind. Processing reads the stored file tile by tile (processStoredLayer) and builds the
 * statistics, histogram and preview in one pass: memory stays at a few tiles and the preview.
 *
 * Limits (environment, read by layerLimits):
 *   LAYER_MAX_BYTES   largest upload in bytes; default 524288000 (500 MiB)
 *   LAYER_MAX_PIXELS  largest width·height of the band; default 250 000 000 (memory does not grow
 *                     with it: it bounds the time one upload may take)
 * The body limit of the server itself (BODY_SIZE_LIMIT, 600 MiB under npm start) must be larger
 * than LAYER_MAX_BYTES, so that our own message answers an oversized upload.
 */
import { Readable } from 'node:stream';
import type { Knex } from 'knex';
import { z } from 'zod';
import { LayerRejected } from '../layers/errors';
import { processStoredLayer } from '../layers/decode';
import { newObjectKey, type ObjectStore } from '../storage/object-store';
import { recordAudit } from '../repositories/audit';
import { deleteLayerRow, findLayer, insertLayer, listLayers, updateLayer, type LayerRow } from '../repositories/layers';
import { versionsCitingLayer } from '../repositories/recipes';
import { ServiceError } from './errors';
import { LAYER_KINDS, LAYER_PLATFORMS, type Layer } from '../../api/client';
import { enqueueJob, jobView, type JobView } from '../jobs/queue';

/** The job kind that processes a stored upload (see ../jobs/kinds/layer-processing.ts). */
const LAYER_PROCESSING = 'layer-processing';

/** Largest band of an upload, in pixels: 250 million (a 500 MB file of Float16 samples). */
export const DEFAULT_LAYER_MAX_PIXELS = 250_000_000;

const DEFAULT_LAYER_MAX_BYTES = 500 * 1024 * 1024;

export interface LayerLimits {
	maxBytes: number;
	maxPixels: number;
	/** Heap limit of the worker that decodes an upload (MB); default 512. */
	decodeHeapMb?: number;
}

function positiveInt(value: string | undefined, fallback: number, name: string): number {
	if (value === undefined || value.trim() === '') return fallback;
	const n = Number(value);
	if (!Number.isInteger(n) || n <= 0) throw new Error(`${name} must be a positive whole number, not ${JSON.stringify(value)}`);
	return n;
}

export function layerLimits(env: Record<string, string | undefined>): LayerLimits {
	return {
		maxBytes: positiveInt(env.LAYER_MAX_BYTES, DEFAULT_LAYER_MAX_BYTES, 'LAYER_MAX_BYTES'),
		maxPixels: positiveInt(env.LAYER_MAX_PIXELS, DEFAULT_LAYER_MAX_PIXELS, 'LAYER_MAX_PIXELS'),
		decodeHeapMb: positiveInt(env.LAYER_DECODE_HEAP_MB, 512, 'LAYER_DECODE_HEAP_MB')
	};
}

/** The upload is larger than LAYER_MAX_BYTES (answered with 413). */
export class UploadTooLarge extends ServiceError {
	constructor(maxBytes: number) {
		super(413, 'too_large', `The file is larger than the limit of ${formatBytes(maxBytes)}. Clip or resample the raster, or ask an administrator to raise LAYER_MAX_BYTES.`);
		this.name = 'UploadTooLarge';
	}
}

export function formatBytes(n: number): string {
	if (n >= 1024 * 1024) return `${Math.round((n / (1024 * 1024)) * 10) / 10} MB`;
	if (n >= 1024) return `${Math.round((n / 1024) * 10) / 10} kB`;
	return `${n} bytes`;
}

const emptyToUndefined = (v: unknown) => (typeof v === 'string' && v.trim() === '' ? undefined : v);

const layerMetaInput = z.object({
	name: z.string({ error: 'Give the layer a name.' }).trim().min(1, 'Give the layer a name.').max(200, 'Keep the name under 200 characters.'),
	kind: z.enum(LAYER_KINDS, { error: 'Choose what the layer measures.' }),
	units: z.string().trim().max(50, 'Keep the units under 50 characters.').default(''),
	acquiredOn: z.preprocess(
		emptyToUndefined,
		z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'Give the acquisition date as YYYY-MM-DD.').refine((d) => !Number.isNaN(Date.parse(d)), 'That acquisition date does not exist.').optional()
	),
	platform: z.preprocess(emptyToUndefined, z.enum(LAYER_PLATFORMS, { error: 'Choose the platform.' }).default('other')),
	band: z.preprocess(emptyToUndefined, z.coerce.number({ error: 'The band is a whole number from 1.' }).int('The band is a whole number from 1.').min(1, 'The band is a whole number from 1.').max(65535).default(1)),
	fileName: z.string().trim().max(255).default('')
});

export type LayerMetaInput = z.input<typeof layerMetaInput>;

/**
 * A layer as the API returns it: the wire type of the typed client (`Layer`), with the timestamp
 * still a Date until json() writes it out. One shape, written once.
 */
export type LayerView = Omit<Layer, 'createdAt'> & { createdAt: Date };

export function layerView(r: LayerRow): LayerView {
	return {
		id: r.id,
		name: r.name,
		kind: r.kind,
		units: r.units,
		acquiredOn: r.acquired_on,
		platform: r.platform,
		status: r.status,
		error: r.error,
		originalName: r.original_name,
		sizeBytes: r.size_bytes,
		band: r.band,
		bandCount: r.band_count,
		width: r.width,
		height: r.height,
		epsg: r.epsg,
		resolution: r.resolution_x !== null && r.resolution_y !== null ? { x: r.resolution_x, y: r.resolution_y } : null,
		nodata: r.nodata,
		footprint: (r.footprint as LayerView['footprint']) ?? null,
		stats:
			r.stat_min !== null && r.stat_max !== null && r.stat_mean !== null && r.stat_std !== null
				? { min: r.stat_min, max: r.stat_max, mean: r.stat_mean, std: r.stat_std, validCount: r.valid_count ?? 0 }
				: null,
		histogram: (r.histogram as LayerView['histogram']) ?? null,
		hasPreview: r.preview_key !== null,
		createdAt: r.created_at
	};
}

/** Passes the bytes through, failing with UploadTooLarge once more than maxBytes went by. */
async function* limited(body: AsyncIterable<Uint8Array | string>, maxBytes: number, counter: { bytes: number }): AsyncGenerator<Uint8Array> {
	for await (const chunk of body) {
		const bytes = typeof chunk === 'string' ? Buffer.from(chunk) : chunk;
		counter.bytes += bytes.byteLength;
		if (counter.bytes > maxBytes) throw new UploadTooLarge(maxBytes);
		yield bytes;
	}
}

export interface UploadContext {
	networkId: number;
	organisationId: number;
	actorId: number;
}

/** What processing learns from a stored raster: its metadata and its preview PNG. */
export interface LayerAnalysis {
	metadata: import('../layers/inspect').LayerMetadata;
	png: Uint8Array;
}

/**
 * The CPU part of processing a layer held in memory: check the band, describe it and render its
 * preview in one pass over its blocks.
 * Throws LayerRejected for a raster we refuse. Pure (no I/O): the layer-processing job runs it in a
 * worker thread.
 */
export async function analyseLayerBytes(bytes: Uint8Array, opts: { band: number; name: string; maxPixels: number }): Promise<LayerAnalysis> {
	// The GeoTIFF reader is loaded on first use (see DEVELOPERS.md: geotiff and build-time analysis).
	// One streamed pass over the file's blocks: the band is never decoded whole.
	const { processLayer: processRaster } = await import('../layers/inspect');
	const buffer = bytes.byteOffset === 0 && bytes.byteLength === bytes.buffer.byteLength ? (bytes.buffer as ArrayBuffer) : (bytes.slice().buffer as ArrayBuffer);
	const { metadata, preview } = await processRaster(buffer, { band: opts.band, name: opts.name, maxPixels: opts.maxPixels, parallel: false });
	return { metadata, png: preview.png };
}

/** Runs analyseLayerBytes somewhere (the job's pool thread); without one, processLayer streams from storage. */
export type LayerAnalyser = (bytes: Uint8Array, opts: { band: number; name: string; maxPixels: number }) => Promise<LayerAnalysis>;

/**
 * Stream `body` into the store and leave the layer `processing`, for processLayer to finish.
 * Refuses bad metadata and oversized files, leaving nothing behind. The body is never held whole
 * in memory while it arrives.
 */
export async function storeLayerUpload(db: Knex, store: ObjectStore, ctx: UploadContext, meta: unknown, body: Readable | AsyncIterable<Uint8Array>, limits: LayerLimits): Promise<LayerRow> {
	const parsed = layerMetaInput.safeParse(meta);
	if (!parsed.success) {
		if (body instanceof Readable) body.resume(); // drain, so the client sees our answer
		throw ServiceError.fromZod(parsed.error);
	}
	const m = parsed.data;
	const storageKey = newObjectKey('layers');
	const id = await insertLayer(db, {
		network_id: ctx.networkId,
		name: m.name,
		kind: m.kind,
		units: m.units,
		acquired_on: m.acquiredOn ?? null,
		platform: m.platform,
		band: m.band,
		original_name: m.fileName,
		created_by: ctx.actorId,
		storage_key: storageKey
	});
	try {
		const counter = { bytes: 0 };
		const { size } = await store.put(storageKey, Readable.from(limited(body, limits.maxBytes, counter)), { contentType: 'image/tiff' });
		await updateLayer(db, id, { status: 'processing', storage_key: storageKey, size_bytes: size });
		return (await findLayer(db, ctx.networkId, id))!;
	} catch (e) {
		await store.delete(storageKey).catch(() => undefined);
		await deleteLayerRow(db, id);
		throw e;
	}
}

/**
 * Turns a stored `processing` layer into a ready one: inspection, statistics, preview; the audit
 * entry is written with it. A refused raster removes the row and the stored objects (a refused
 * upload leaves nothing behind) and throws ServiceError 422 with the reason.
 */
export async function processLayer(db: Knex, store: ObjectStore, ctx: UploadContext, layerId: number, limits: LayerLimits, analyse?: LayerAnalyser): Promise<LayerView> {
	const row = await findLayer(db, ctx.networkId, layerId);
	if (!row) throw new ServiceError(404, 'not_found', 'No such layer.');
	if (row.status === 'ready') return layerView(row);
	if (!row.storage_key) throw new ServiceError(409, 'not_stored', 'The layer has no stored file.');
	let previewKey: string | null = null;
	try {
		const opts = { band: row.band, name: row.original_name || row.name, maxPixels: limits.maxPixels };
		// By default the stored file is read tile by tile in a heap-limited worker thread (a
		// decompression bomb ends that worker, not the server); a given analyser gets the bytes.
		const { metadata, png } = analyse
			? await analyse(await store.getBuffer(row.storage_key), opts)
			: await processStoredLayer(store, row.storage_key, opts, { heapMb: limits.decodeHeapMb }).then((r) => ({ metadata: r.metadata, png: r.preview.png }));
		previewKey = newObjectKey('previews');
		await store.put(previewKey, Buffer.from(png.buffer, png.byteOffset, png.byteLength), { contentType: 'image/png' });
		const done = await db.transaction(async (trx) => {
			await updateLayer(trx, layerId, {
				status: 'ready',
				preview_key: previewKey,
				width: metadata.width,
				height: metadata.height,
				band_count: metadata.bandCount,
				epsg: metadata.epsg,
				resolution_x: metadata.resolution.x,
				resolution_y: metadata.resolution.y,
				nodata: metadata.nodata,
				footprint: metadata.footprint,
				transform: [metadata.origin.x, metadata.resolution.x, 0, metadata.origin.y, 0, -metadata.resolution.y],
				stat_min: metadata.stats.min,
				stat_max: metadata.stats.max,
				stat_mean: metadata.stats.mean,
				stat_std: metadata.stats.std,
				valid_count: metadata.stats.validCount,
				histogram: metadata.histogram
			});
			const r = (await findLayer(trx, ctx.networkId, layerId))!;
			await recordAudit(trx, { organisationId: ctx.organisationId, actorUserId: ctx.actorId, action: 'layer.create', objectType: 'layer', objectId: layerId, after: { name: r.name, kind: r.kind, epsg: r.epsg, sizeBytes: r.size_bytes } });
			return r;
		});
		return layerView(done);
	} catch (e) {
		if (previewKey) await store.delete(previewKey).catch(() => undefined);
		const rejected = rejection(e);
		if (rejected) {
			await discardLayer(db, store, ctx.networkId, layerId);
			throw rejected;
		}
		throw e;
	}
}

/** LayerRejected (also as it arrives from a worker thread: a plain error named LayerRejected) as a 422. */
function rejection(e: unknown): ServiceError | null {
	if (e instanceof LayerRejected) return new ServiceError(422, e.code, e.message, 'file');
	const err = e as { name?: string; code?: string; message?: string } | null;
	if (err?.name === 'LayerRejected') return new ServiceError(422, err.code ?? 'rejected', err.message ?? 'The raster was refused.', 'file');
	return null;
}

/** Removes a layer that never became ready, with its stored objects. */
export async function discardLayer(db: Knex, store: ObjectStore, networkId: number, layerId: number): Promise<void> {
	const row = await findLayer(db, networkId, layerId);
	if (!row || row.status === 'ready') return;
	for (const k of [row.storage_key, row.preview_key]) if (k) await store.delete(k).catch(() => undefined);
	await deleteLayerRow(db, layerId);
}

/**
 * The app's upload: store the file, queue its processing as a job and answer at once with the
 * `processing` layer and the job to follow. A refusal found while storing (bad metadata, too large)
 * leaves nothing; one found by the job removes the layer again and fails the job with the reason.
 */
export async function acceptLayerUpload(db: Knex, store: ObjectStore, ctx: UploadContext, meta: unknown, body: Readable | AsyncIterable<Uint8Array>, limits: LayerLimits): Promise<{ layer: LayerView; job: JobView }> {
	const row = await storeLayerUpload(db, store, ctx, meta, body, limits);
	try {
		const job = await enqueueJob(db, { kind: LAYER_PROCESSING, payload: { ...ctx, layerId: row.id }, networkId: ctx.networkId, createdBy: ctx.actorId, idempotencyKey: `layer-processing:${row.id}` });
		return { layer: layerView(row), job: jobView(job) };
	} catch (e) {
		await discardLayer(db, store, ctx.networkId, row.id);
		throw e;
	}
}

/**
 * Stream `body` into the store and turn it into a ready layer in this request, or refuse it
 * leaving nothing. Scripts and tests use it; the app queues processLayer as a job instead.
 */
export async function uploadLayer(db: Knex, store: ObjectStore, ctx: UploadContext, meta: unknown, body: Readable | AsyncIterable<Uint8Array>, limits: LayerLimits, analyse?: LayerAnalyser): Promise<LayerView> {
	const row = await storeLayerUpload(db, store, ctx, meta, body, limits);
	try {
		return await processLayer(db, store, ctx, row.id, limits, analyse);
	} catch (e) {
		await discardLayer(db, store, ctx.networkId, row.id);
		throw e;
	}
}

export async function listLayerViews(db: Knex, networkId: number): Promise<LayerView[]> {
	return (await listLayers(db, networkId)).map(layerView);
}

export async function getLayer(db: Knex, networkId: number, layerId: number): Promise<LayerRow> {
	const row = await findLayer(db, networkId, layerId);
	if (!row) throw new ServiceError(404, 'not_found', 'No such layer.');
	return row;
}

/** The stored preview PNG of a ready layer. */
export async function layerPreview(db: Knex, store: ObjectStore, networkId: number, layerId: number): Promise<Buffer> {
	const row = await getLayer(db, networkId, layerId);
	if (!row.preview_key) throw new ServiceError(404, 'not_found', 'This layer has no preview yet.');
	return store.getBuffer(row.preview_key);
}

/**
 * Delete a layer and its stored file and preview. Refused (409) while any recipe version cites
 * the layer: versions are immutable and must stay reproducible.
 */
export async function deleteLayer(db: Knex, store: ObjectStore, ctx: UploadContext, layerId: number): Promise<void> {
	const keys = await db.transaction(async (trx) => {
		const row = await trx('layers').select('id').where({ id: layerId, network_id: ctx.networkId }).forUpdate().first();
		if (!row) throw new ServiceError(404, 'not_found', 'No such layer.');
		const layer = (await findLayer(trx, ctx.networkId, layerId))!;
		const citing = await versionsCitingLayer(trx, ctx.networkId, layerId);
		if (citing.length > 0) {
			const list = citing.map((c) => `"${c.recipe}" v${c.version}`).join(', ');
			throw new ServiceError(409, 'layer_in_use', `Layer "${layer.name}" is used by importance recipe ${list}; recipe versions never change, so the layer stays.`);
		}
		await deleteLayerRow(trx, layerId);
		await recordAudit(trx, { organisationId: ctx.organisationId, actorUserId: ctx.actorId, action: 'layer.delete', objectType: 'layer', objectId: layerId, before: { name: layer.name, kind: layer.kind } });
		return [layer.storage_key, layer.preview_key].filter((k): k is string => k !== null);
	});
	for (const k of keys) await store.delete(k).catch(() => undefined);
}
