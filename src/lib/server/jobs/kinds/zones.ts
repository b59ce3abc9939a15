/**
 * `zones`: the zone work that needs the importance on the working grid: computing a zone set from
 * the importance (k-means), and measuring the importance share of each zone of a set. The worker's
 * thread reads the network, the zones and the recipe version (computing the version's surface in a
 * pool thread if it is not stored); the working grid, the clustering and the measuring run in a
 * pool thread (heap limit JOBS_IMPORTANCE_MEMORY_MB); the zones service stores the outcome. The
 * result is {zoneSetId}.
 */
import type { MultiPolygonGeometry } from '../../../geo/polygons';
import { findNetwork } from '../../repositories/networks';
import { networkRecipeVersionId } from '../../repositories/recipes';
import { findZoneSet, listZones } from '../../repositories/zones';
import { ServiceError } from '../../services/errors';
import { ensureVersionSurface } from '../../services/importance';
import { ZONE_WORK, type ZoneWork } from '../../services/zone-jobs';
import { storeComputedZoneSet, storeZoneShares, zoneGridOptions, type NewZone } from '../../services/zones';
import { JobFailure, type JobKind } from '../registry';
import { refusalsFail } from './refusals';
import { IMPORTANCE_MEMORY_MB, runWithStore, threadSurfaceRunner } from './thread-work';

type ZoneReply = { zones: NewZone[] | null; shares: (number | null)[] };

export const zonesKind: JobKind<ZoneWork, { zoneSetId: number }> = {
	kind: ZONE_WORK,
	limits: { timeMs: 10 * 60_000, memoryMb: IMPORTANCE_MEMORY_MB },
	maxAttempts: 2,
	backoffMs: 2000,
	async handler(ctx) {
		const { payload, db, store, reportProgress } = ctx;
		const network = await findNetwork(db, payload.networkId);
		if (!network) throw new JobFailure('The network no longer exists.');
		return refusalsFail(async () => {
			let zoneIds: number[] = [];
			let geometries: MultiPolygonGeometry[] = [];
			if (payload.operation === 'measure') {
				const set = await findZoneSet(db, network.id, payload.zoneSetId);
				if (!set) throw new ServiceError(404, 'not_found', 'No such zone set.');
				const zones = await listZones(db, [set.id]);
				zoneIds = zones.map((z) => z.id);
				geometries = zones.map((z) => z.geometry);
			}
			reportProgress({ step: 'importance' });
			const versionId = await networkRecipeVersionId(db, network.id);
			if (versionId === null) {
				if (payload.operation === 'compute') throw new ServiceError(422, 'no_importance', 'Zones can be computed once an importance recipe is chosen.', 'k');
				await storeZoneShares(db, network, payload.actorId, payload.zoneSetId, zoneIds, zoneIds.map(() => null), null);
				return { zoneSetId: payload.zoneSetId };
			}
			const surfaceKey = await ensureVersionSurface(db, store, network.id, versionId, threadSurfaceRunner(ctx));
			if (!surfaceKey) throw new JobFailure('The recipe version in use no longer exists.');
			reportProgress({ step: payload.operation === 'compute' ? 'clustering' : 'measuring' });
			const work = payload.operation === 'compute' ? { operation: 'compute' as const, k: payload.k } : { operation: 'measure' as const, geometries };
			const reply = await runWithStore<ZoneReply>(ctx, 'zoneWork', { surfaceKey, versionId, options: await zoneGridOptions(db, network), work });
			if (payload.operation === 'compute') return { zoneSetId: await storeComputedZoneSet(db, network, payload.actorId, payload.name, payload.k, { zones: reply.zones!, shares: reply.shares }, versionId) };
			await storeZoneShares(db, network, payload.actorId, payload.zoneSetId, zoneIds, reply.shares, versionId);
			return { zoneSetId: payload.zoneSetId };
		});
	}
};
