/**
 * Placement off the main thread: `runPlacement(...)` starts a worker thread running the pure engine
 * and resolves with its result. Background jobs and server routes call this, never place()
 * directly, so pages stay responsive while a placement runs. The worker runs TypeScript through
 * tsx (a runtime dependency), from the project's own source tree.
 */
import { Worker } from 'node:worker_threads';
import { workerEntryPath } from '../worker-entry-path';
import type { HistoryEntry, PlacementOptions, PlacementResult, SensorInput, WorkingGrid, ZoneMap } from '../../engine/types';
import { EngineInputError } from '../../engine/errors';

function entryPath(): string {
	return workerEntryPath(import.meta.url, 'engine/worker-bootstrap.mjs');
}

export interface RunPlacementOptions {
	onIteration?: (entry: HistoryEntry) => void;
	/** Report every n-th iteration (default 1). */
	progressEvery?: number;
	signal?: AbortSignal;
}

export function runPlacement(grid: WorkingGrid, zones: ZoneMap | null, sensors: SensorInput[], options: Omit<PlacementOptions, 'onIteration'>, run: RunPlacementOptions = {}): Promise<PlacementResult> {
	return new Promise((resolve, reject) => {
		const worker = new Worker(entryPath(), {
			workerData: { grid, zones, sensors, options, progressEvery: Math.max(1, run.progressEvery ?? 1) }
		});
		let settled = false;
		const finish = (fn: () => void) => {
			if (settled) return;
			settled = true;
			run.signal?.removeEventListener('abort', onAbort);
			fn();
			void worker.terminate();
		};
		const onAbort = () => finish(() => reject(new Error('placement cancelled')));
		run.signal?.addEventListener('abort', onAbort);
		worker.on('message', (msg: { type: string; entry?: HistoryEntry; result?: PlacementResult; message?: string; input?: boolean; field?: string }) => {
			if (msg.type === 'iteration' && msg.entry) run.onIteration?.(msg.entry);
			else if (msg.type === 'done') finish(() => resolve(msg.result!));
			else if (msg.type === 'error') finish(() => reject(msg.input ? new EngineInputError(msg.field ?? 'input', msg.message ?? 'bad input') : new Error(msg.message)));
		});
		worker.on('error', (err) => finish(() => reject(err)));
		worker.on('exit', (code) => finish(() => reject(new Error(`placement worker stopped (exit ${code})`))));
	});
}
