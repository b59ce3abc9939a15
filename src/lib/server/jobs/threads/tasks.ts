/**
 * The CPU tasks that pool threads run (see ../threads.ts). Each takes plain data (typed arrays are
 * copied or transferred) and returns plain data; errors that carry a meaning for the user come back
 * as values, since only an error's message survives the trip between threads.
 */
import type { MessagePort } from 'node:worker_threads';
import { place } from '../../../engine';
import { EngineInputError } from '../../../engine/errors';
import type { PlacementOptions, SensorInput, WorkingGrid, ZoneMap } from '../../../engine/types';
import { LayerRejected } from '../../layers/errors';
import { portRangeReader } from '../../layers/range-port';
import { analyseStoredLayer } from '../../services/layers';

/**
 * Layer processing of a stored file whose byte ranges this thread asks `port` for (the job's side
 * answers them from the object store: layers/range-port.ts). Memory: a few tiles and the preview.
 */
export async function analyseLayer(input: { port: MessagePort; band: number; name: string; maxPixels: number }) {
	try {
		const { metadata, png } = await analyseStoredLayer(portRangeReader(input.port), input);
		return { ok: true as const, metadata, png };
	} catch (e) {
		if (e instanceof LayerRejected) return { ok: false as const, code: e.code, message: e.message };
		throw e;
	} finally {
		input.port.close();
	}
}

export interface PlaceTaskInput {
	grid: WorkingGrid;
	zones: ZoneMap | null;
	sensors: SensorInput[];
	options: Omit<PlacementOptions, 'onIteration'>;
	/** Receives {iteration, cost, coverage} every `progressEvery` iterations. */
	port?: MessagePort;
	progressEvery?: number;
}

export function placeSensors(input: PlaceTaskInput) {
	const every = Math.max(1, input.progressEvery ?? 1);
	try {
		const result = place(input.grid, input.zones, input.sensors, {
			...input.options,
			onIteration: (entry) => {
				if (entry.iteration % every === 0) input.port?.postMessage(entry);
			}
		});
		return { ok: true as const, result };
	} catch (e) {
		if (e instanceof EngineInputError) return { ok: false as const, field: e.field, message: e.message };
		throw e;
	} finally {
		input.port?.close();
	}
}
