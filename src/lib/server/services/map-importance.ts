/**
 * The importance map's image and contours, drawn once per (recipe version, CRS) by a
 * `map-importance` job and kept in the object store under `map-importance/`, so that every app
 * process shares them and no request ever draws one (see map-data.ts, which only reads them).
 *
 * Queued (idempotency key per version and CRS) when a version's surface is computed (the
 * recipe-version job's finished step, in the CRS the network works in with that version) and on
 * demand by a map request that finds no image. The CRS is a parameter: the network's working CRS
 * today, any other (a web map's EPSG:3857) the same way.
 */
import { WEB_MAP_EPSG } from '../../map/web-map';
import type { Knex } from 'knex';
import { enqueueJob, findJobByKey, type JobRow } from '../jobs/queue';
import { ImportanceImageError, renderImportance, type ImportanceView } from '../map/importance-image';
import { findVersion } from '../repositories/recipes';
import { ObjectNotFound, type ObjectStore } from '../storage/object-store';
import type { Db } from '../db';
import { ServiceError } from './errors';
import { decodeSurface, ensureVersionSurface, localSurfaceRunner, type SurfaceRunner } from './importance';
import { workingCrsWith } from './working-crs';

export const MAP_IMPORTANCE = 'map-importance';

export interface MapImportancePayload {
	networkId: number;
	versionId: number;
	epsg: number;
}

/** The stored view of one image: its bounds, range and contours, or `{empty: true}` when the surface holds no value there. */
export type StoredMapView = ImportanceView | { empty: true };

/** A failed job is asked for again once it ended this long ago (the layers or the CRS table may have been mended). */
const FAILED_RETRY_MS = 10 * 60_000;

export function mapImportanceKeys(versionId: number, epsg: number) {
	const base = `map-importance/recipe-version-${versionId}-epsg-${epsg}`;
	return { view: `${base}.json`, png: `${base}.png` };
}

/** The stored view of (version, CRS), or null when it is not drawn yet. */
export async function readMapImportanceView(store: ObjectStore, versionId: number, epsg: number): Promise<StoredMapView | null> {
	try {
		return JSON.parse((await store.getBuffer(mapImportanceKeys(versionId, epsg).view)).toString('utf8')) as StoredMapView;
	} catch (e) {
		if (e instanceof ObjectNotFound) return null;
		throw e;
	}
}

/** The stored PNG of (version, CRS); only after its view was read (the PNG is stored first). */
export async function readMapImportancePng(store: ObjectStore, versionId: number, epsg: number): Promise<Buffer> {
	return store.getBuffer(mapImportanceKeys(versionId, epsg).png);
}

/**
 * The job that draws (version, CRS): the one queued or running, else a new one. One job per
 * version and CRS: a finished job whose image went missing since, a cancelled one, or one that
 * failed more than FAILED_RETRY_MS ago gives way to a new job; a recent failure is returned as it
 * is (its error says why) rather than queued again on every map view.
 */
export async function queueMapImportance(db: Db, p: MapImportancePayload): Promise<JobRow> {
	const base = `${MAP_IMPORTANCE}:${p.versionId}:${p.epsg}`;
	let key = base;
	for (;;) {
		const job = await findJobByKey(db, key);
		if (!job) break;
		const ended = job.finished_at ? new Date(job.finished_at).getTime() : 0;
		const redo = job.state === 'finished' || job.state === 'cancelled' || (job.state === 'failed' && Date.now() - ended > FAILED_RETRY_MS);
		if (!redo) return job;
		key = `${base}:after-${job.id}`;
	}
	return enqueueJob(db, { kind: MAP_IMPORTANCE, payload: p, networkId: p.networkId, idempotencyKey: key, priority: 10 });
}

/**
 * After a version's surface is computed: queue its images in the CRS the network works in with that
 * version (the server-drawn maps) and in EPSG:3857 (the web maps); none without a working CRS.
 * Returns the working-CRS job.
 */
export async function queueMapImportanceOfVersion(db: Knex | Knex.Transaction, networkId: number, versionId: number): Promise<JobRow | null> {
	const version = await findVersion(db, networkId, versionId);
	if (!version) return null;
	const epsg = await workingCrsWith(db, networkId, version.grid_epsg);
	if (epsg === null) return null;
	const queue = (e: number) => enqueueJob(db, { kind: MAP_IMPORTANCE, payload: { networkId, versionId, epsg: e } satisfies MapImportancePayload, networkId, idempotencyKey: `${MAP_IMPORTANCE}:${versionId}:${e}`, priority: 10 });
	const job = await queue(epsg);
	if (epsg !== WEB_MAP_EPSG) await queue(WEB_MAP_EPSG);
	return job;
}

/** Draws the image of a stored surface in a CRS (the job passes one that does it in its pool thread). */
export type MapImageRenderer = (surfaceKey: string, epsg: number) => Promise<{ view: ImportanceView; png: Uint8Array } | null>;

/** Drawing in the calling thread: for seeds, scripts and tests. */
export function localMapImageRenderer(store: ObjectStore): MapImageRenderer {
	return async (surfaceKey, epsg) => {
		try {
			return renderImportance(decodeSurface(await store.getBuffer(surfaceKey)), epsg);
		} catch (e) {
			if (e instanceof ImportanceImageError) throw new ServiceError(422, 'map_unavailable', e.message);
			throw e;
		}
	};
}

/**
 * Draws and stores the image of (version, CRS) unless it is stored: the image first, then the view
 * that marks the pair complete. Computes the version's surface first when it is not stored.
 * ServiceError 404 when the version is gone, 422 when the surface cannot be drawn in that CRS.
 */
export async function prepareMapImportance(db: Knex, store: ObjectStore, p: MapImportancePayload, opts: { surfaces?: SurfaceRunner; render?: MapImageRenderer } = {}): Promise<{ drawn: boolean; empty: boolean }> {
	const stored = await readMapImportanceView(store, p.versionId, p.epsg);
	if (stored) return { drawn: false, empty: 'empty' in stored };
	const surfaceKey = await ensureVersionSurface(db, store, p.networkId, p.versionId, opts.surfaces ?? localSurfaceRunner(store));
	if (!surfaceKey) throw new ServiceError(404, 'not_found', 'The recipe version no longer exists.');
	const image = await (opts.render ?? localMapImageRenderer(store))(surfaceKey, p.epsg);
	const keys = mapImportanceKeys(p.versionId, p.epsg);
	if (image) await store.put(keys.png, image.png, { contentType: 'image/png' });
	const view: StoredMapView = image ? image.view : { empty: true };
	await store.put(keys.view, Buffer.from(JSON.stringify(view)), { contentType: 'application/json' });
	return { drawn: true, empty: !image };
}

/** The map image of a recipe version is not drawn yet: its job is queued (409 importance_pending). */
export class MapImportancePending extends ServiceError {
	constructor(public readonly job: JobRow) {
		super(409, 'importance_pending', 'The importance map is being prepared; try again in a moment.');
	}
}
