/**
 * `map-importance` (payload {networkId, versionId, epsg}): draws the importance map's image and
 * contours of one recipe version in one CRS and stores them (services/map-importance.ts). The
 * surface is read (or first computed) and drawn in a pool thread with the kind's heap limit; the
 * worker's thread only reads the database and stores the result. Queued once per version and CRS
 * (idempotency key); a job whose image is stored already finishes at once. Result
 * {versionId, epsg, empty}: `empty` when the surface holds no value in that CRS.
 */
import { MAP_IMPORTANCE, prepareMapImportance, type MapImportancePayload } from '../../services/map-importance';
import type { ImportanceView } from '../../map/importance-image';
import type { JobKind } from '../registry';
import { refusalsFail } from './refusals';
import { IMPORTANCE_MEMORY_MB, runWithStore, threadSurfaceRunner } from './thread-work';

export const mapImportanceKind: JobKind<MapImportancePayload, { versionId: number; epsg: number; empty: boolean }> = {
	kind: MAP_IMPORTANCE,
	limits: { timeMs: 5 * 60_000, memoryMb: IMPORTANCE_MEMORY_MB },
	maxAttempts: 3,
	backoffMs: 2000,
	async handler(ctx) {
		const { payload, db, store, reportProgress } = ctx;
		reportProgress({ step: 'drawing the importance map' });
		const { empty } = await refusalsFail(() =>
			prepareMapImportance(db, store, payload, {
				surfaces: threadSurfaceRunner(ctx),
				render: (surfaceKey, epsg) => runWithStore<{ view: ImportanceView; png: Uint8Array } | null>(ctx, 'mapImportance', { surfaceKey, epsg })
			})
		);
		return { versionId: payload.versionId, epsg: payload.epsg, empty };
	}
};
