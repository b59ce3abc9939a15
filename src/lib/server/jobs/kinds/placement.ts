/**
 * `placement`: one run of the siting engine on a network's current importance (its chosen recipe
 * version on the working grid, clipped to the study area, exclusions at zero), optionally balanced
 * over a zone set. The worker's thread reads the network, the zones and the recipe version; the
 * working grid, the zones' raster and the engine run in a pool thread (placeOnStoredSurface) that
 * reads the stored surface. It reports progress every iteration ({iteration, maxIterations, cost,
 * coverage}) and returns the engine's PlacementResult. What becomes of the result (a proposal revision) is a
 * follow-up step attached with addFinishedHook('placement', …).
 */
import { MessageChannel } from 'node:worker_threads';
import type { PlacementOptions, PlacementResult, SensorInput } from '../../../engine/types';
import { findNetwork } from '../../repositories/networks';
import { networkRecipeVersionId } from '../../repositories/recipes';
import { findZoneSet, listZones } from '../../repositories/zones';
import { ensureVersionSurface } from '../../services/importance';
import { zoneGridOptions } from '../../services/zones';
import { JobFailure, type JobKind } from '../registry';
import { refusalsFail } from './refusals';
import { runWithStore, threadSurfaceRunner } from './thread-work';

export interface PlacementPayload {
	networkId: number;
	/** Engine options (strategy, count and radius for a greenfield run, maxIterations, seed, …). */
	options: Omit<PlacementOptions, 'onIteration'>;
	/** Existing sensors in the working CRS; empty for a greenfield run with options.count. */
	sensors?: SensorInput[];
	/** Zones to balance over (zone-balanced strategy); default none. */
	zoneSetId?: number | null;
}

export const PLACEMENT = 'placement';

export const placementKind: JobKind<PlacementPayload, PlacementResult> = {
	kind: PLACEMENT,
	limits: { timeMs: Number(process.env.JOBS_PLACEMENT_TIME_S ?? 15 * 60) * 1000, memoryMb: Number(process.env.JOBS_PLACEMENT_MEMORY_MB ?? 1024) },
	maxAttempts: 3,
	async handler(ctx) {
		const { payload, db, store, reportProgress } = ctx;
		const network = await findNetwork(db, payload.networkId);
		if (!network) throw new JobFailure('The network no longer exists.');
		const versionId = await networkRecipeVersionId(db, network.id);
		if (versionId === null) throw new JobFailure('The network has no importance recipe chosen yet.');
		let zones: { id: string; geometry: unknown }[] | null = null;
		if (payload.zoneSetId) {
			const set = await findZoneSet(db, network.id, payload.zoneSetId);
			if (!set) throw new JobFailure('The zone set no longer exists.');
			zones = (await listZones(db, [set.id])).map((z) => ({ id: z.code, geometry: z.geometry }));
		}
		const maxIterations = payload.options.maxIterations ?? 500;
		const channel = new MessageChannel();
		let last = -1;
		const report = (e: { iteration: number; cost: number; coverage: number }) => {
			if (e.iteration <= last) return;
			last = e.iteration;
			reportProgress({ iteration: e.iteration, maxIterations, cost: e.cost, coverage: e.coverage });
		};
		channel.port1.on('message', report);
		try {
			return await refusalsFail(async () => {
				const surfaceKey = await ensureVersionSurface(db, store, network.id, versionId, threadSurfaceRunner(ctx));
				if (!surfaceKey) throw new JobFailure('The recipe version in use no longer exists.');
				const input = { surfaceKey, versionId, options: await zoneGridOptions(db, network), zones, sensors: payload.sensors ?? [], placement: payload.options, progress: channel.port2 };
				const result = await runWithStore<PlacementResult>(ctx, 'placeOnStoredSurface', input, [channel.port2]);
				// The last progress message may still be on its way (another port than the result's): say it here.
				report({ iteration: result.iterations, cost: result.cost, coverage: result.coverage });
				return result;
			});
		} finally {
			channel.port1.close();
		}
	}
};
