/**
 * `zones`: the zone work that needs the importance on the working grid: computing a zone set from
 * the importance (k-means), and measuring the importance share of each zone of a set. Calls the
 * zones service; the result is {zoneSetId}.
 */
import { findNetwork } from '../../repositories/networks';
import { ZONE_WORK, type ZoneWork } from '../../services/zone-jobs';
import { createComputedZoneSet, importanceForZones, measureZoneSet } from '../../services/zones';
import { JobFailure, type JobKind } from '../registry';
import { refusalsFail } from './refusals';

export const zonesKind: JobKind<ZoneWork, { zoneSetId: number }> = {
	kind: ZONE_WORK,
	limits: { timeMs: 10 * 60_000, memoryMb: 1024 },
	maxAttempts: 2,
	backoffMs: 2000,
	async handler({ payload, db, store, reportProgress }) {
		const network = await findNetwork(db, payload.networkId);
		if (!network) throw new JobFailure('The network no longer exists.');
		return refusalsFail(async () => {
			reportProgress({ step: 'importance' });
			const importance = await importanceForZones(db, store, network);
			reportProgress({ step: payload.operation === 'compute' ? 'clustering' : 'measuring' });
			if (payload.operation === 'compute') return { zoneSetId: await createComputedZoneSet(db, network, payload.actorId, payload.name, payload.k, importance) };
			await measureZoneSet(db, network, payload.actorId, payload.zoneSetId, importance);
			return { zoneSetId: payload.zoneSetId };
		});
	}
};
