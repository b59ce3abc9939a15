/**
 * Runs one placement in a worker thread so the server's event loop stays free. Receives
 * { grid, zones, sensors, options } as workerData (typed arrays are copied by structured clone),
 * posts { type: 'iteration', entry } per iteration and finally { type: 'done', result } or
 * { type: 'error', message, input }.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { place } from '../../engine';
import { EngineInputError } from '../../engine/errors';
import type { PlacementOptions, SensorInput, WorkingGrid, ZoneMap } from '../../engine/types';

interface Job {
	grid: WorkingGrid;
	zones: ZoneMap | null;
	sensors: SensorInput[];
	options: Omit<PlacementOptions, 'onIteration'>;
	progressEvery: number;
}

const job = workerData as Job;
try {
	const result = place(job.grid, job.zones, job.sensors, {
		...job.options,
		onIteration: (entry) => {
			if (entry.iteration % job.progressEvery === 0) parentPort!.postMessage({ type: 'iteration', entry });
		}
	});
	parentPort!.postMessage({ type: 'done', result });
} catch (err) {
	parentPort!.postMessage({ type: 'error', message: err instanceof Error ? err.message : String(err), input: err instanceof EngineInputError, field: err instanceof EngineInputError ? err.field : undefined });
}
