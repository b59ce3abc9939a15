/**
 * Zone work queued as jobs (../jobs/kinds/zones.ts): computing zones from the importance and
 * measuring zone shares. The request does the cheap checks and answers with the job; an uploaded or
 * grid zone set is stored at once without shares, and its shares are measured by a job.
 */
import type { Knex } from 'knex';
import { enqueueJob, jobView, type JobView } from '../jobs/queue';
import { findZoneSet } from '../repositories/zones';
import type { NetworkRow } from '../repositories/networks';
import { ServiceError } from './errors';

export const ZONE_WORK = 'zones';

export type ZoneWork = { networkId: number; actorId: number } & ({ operation: 'compute'; name: string; k: number } | { operation: 'measure'; zoneSetId: number });

/** Queue the computation of `k` zones from the network's importance. */
export async function queueComputedZones(db: Knex, network: NetworkRow, actorId: number, name: string, k: number): Promise<JobView> {
	const row = await db('networks').select('recipe_version_id').where({ id: network.id }).first();
	if (!row?.recipe_version_id) throw new ServiceError(422, 'no_importance', 'Zones can be computed once an importance recipe is chosen.', 'k');
	const payload: ZoneWork = { networkId: network.id, actorId, operation: 'compute', name, k };
	return jobView(await enqueueJob(db, { kind: ZONE_WORK, payload, networkId: network.id, createdBy: actorId, priority: 5 }));
}

/** Queue measuring the importance share of each zone of a set. */
export async function queueZoneShares(db: Knex, network: NetworkRow, actorId: number, zoneSetId: number): Promise<JobView> {
	if (!(await findZoneSet(db, network.id, zoneSetId))) throw new ServiceError(404, 'not_found', 'No such zone set.');
	const payload: ZoneWork = { networkId: network.id, actorId, operation: 'measure', zoneSetId };
	return jobView(await enqueueJob(db, { kind: ZONE_WORK, payload, networkId: network.id, createdBy: actorId, priority: 5 }));
}

/**
 * Queue measuring the shares of a zone set just stored without them, when the network has an
 * importance to measure against; null when it has none (the shares stay unknown).
 */
export async function queueSharesOfNewZoneSet(db: Knex, network: NetworkRow, actorId: number, zoneSetId: number): Promise<JobView | null> {
	const row = await db('networks').select('recipe_version_id').where({ id: network.id }).first();
	if (!row?.recipe_version_id) return null;
	return queueZoneShares(db, network, actorId, zoneSetId);
}
