/**
 * `placement`: one run of the siting engine on a network's current importance (its chosen recipe
 * version on the working grid, clipped to the study area, exclusions at zero), optionally balanced
 * over a zone set. It reports progress every iteration ({iteration, maxIterations, cost, coverage})
 * and returns the engine's PlacementResult. What becomes of the result (a proposal revision) is a
 * follow-up step attached with addFinishedHook('placement', …).
 */
import { MessageChannel } from 'node:worker_threads';
import { rasterizeZones } from '../../../engine/rasterize';
import type { PlacementOptions, PlacementResult, SensorInput, ZoneMap } from '../../../engine/types';
import { parseEpsg, transformer } from '../../../geo/crs';
import { projectRings } from '../../../geo/geojson';
import { findNetwork } from '../../repositories/networks';
import { findZoneSet, listZones } from '../../repositories/zones';
import { importanceForZones } from '../../services/zones';
import { JobFailure, type JobKind } from '../registry';
import { refusalsFail } from './refusals';
import type { PlaceTaskInput } from '../threads/tasks';

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

type PlaceReply = { ok: true; result: PlacementResult } | { ok: false; field: string; message: string };

export const placementKind: JobKind<PlacementPayload, PlacementResult> = {
	kind: PLACEMENT,
	limits: { timeMs: Number(process.env.JOBS_PLACEMENT_TIME_S ?? 15 * 60) * 1000, memoryMb: Number(process.env.JOBS_PLACEMENT_MEMORY_MB ?? 1024) },
	maxAttempts: 3,
	async handler({ payload, db, store, runInThread, reportProgress, signal }) {
		const network = await findNetwork(db, payload.networkId);
		if (!network) throw new JobFailure('The network no longer exists.');
		const importance = await refusalsFail(() => importanceForZones(db, store, network));
		if (!importance) throw new JobFailure('The network has no importance recipe chosen yet.');
		const grid = importance.grid;
		let zones: ZoneMap | null = null;
		if (payload.zoneSetId) {
			const set = await findZoneSet(db, network.id, payload.zoneSetId);
			if (!set) throw new JobFailure('The zone set no longer exists.');
			const rows = await listZones(db, [set.id]);
			const fwd = transformer(4326, parseEpsg(grid.crs)).forward;
			zones = rasterizeZones(grid, rows.map((z) => ({ id: z.code, rings: z.geometry.coordinates.flatMap((poly) => projectRings(poly, fwd, grid.cellSize / 4)) })));
		}
		const maxIterations = payload.options.maxIterations ?? 500;
		const channel = new MessageChannel();
		channel.port1.on('message', (e: { iteration: number; cost: number; coverage: number }) => reportProgress({ iteration: e.iteration, maxIterations, cost: e.cost, coverage: e.coverage }));
		try {
			const input: PlaceTaskInput = { grid, zones, sensors: payload.sensors ?? [], options: payload.options, port: channel.port2 };
			const reply = await runInThread<PlaceReply>('placeSensors', input, { transferList: [channel.port2], signal });
			if (!reply.ok) throw new JobFailure(`The placement cannot run: ${reply.message}`);
			return reply.result;
		} finally {
			channel.port1.close();
		}
	}
};
