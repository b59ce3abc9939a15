/**
 * The worker-thread pool (piscina) that runs the CPU part of jobs: decoding rasters, importance
 * surfaces, placements. One pool per memory limit, since a thread's heap limit
 * (resourceLimits.maxOldGenerationSizeMb) is fixed when the thread starts. A task that runs out of
 * memory kills only its thread; piscina rejects the task and starts a fresh thread for the next one.
 */
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { Piscina } from 'piscina';

export interface ThreadRunOptions {
	transferList?: Transferable[];
	signal?: AbortSignal;
	/** A module whose default export is `(message: {task, input}) => result`; default ./threads/bootstrap.mjs. */
	filename?: string;
}

/** Runs `task` of ./threads/tasks.ts (or of `filename`) in a pool thread. */
export type ThreadRunner = <T = unknown>(task: string, input: unknown, opts?: ThreadRunOptions) => Promise<T>;

export const DEFAULT_TASKS_FILE = path.join(path.dirname(fileURLToPath(import.meta.url)), 'threads', 'bootstrap.mjs');

const pools = new Map<number, Piscina>();
let maxThreadsPerPool = 1;

/** How many threads each pool may run at once (the worker's concurrency). */
export function setThreadLimit(n: number): void {
	maxThreadsPerPool = Math.max(1, n);
}

function poolFor(memoryMb: number): Piscina {
	let pool = pools.get(memoryMb);
	if (!pool) {
		pool = new Piscina({
			filename: DEFAULT_TASKS_FILE,
			minThreads: 0,
			maxThreads: maxThreadsPerPool,
			idleTimeout: 30_000,
			resourceLimits: { maxOldGenerationSizeMb: memoryMb, maxYoungGenerationSizeMb: Math.min(64, Math.max(8, Math.round(memoryMb / 16))) }
		});
		pools.set(memoryMb, pool);
	}
	return pool;
}

/** A runner bound to one memory limit (a job kind's limits.memoryMb). */
export function threadRunner(memoryMb: number, defaultSignal?: AbortSignal): ThreadRunner {
	return async <T>(task: string, input: unknown, opts: ThreadRunOptions = {}) => {
		const signal = opts.signal ?? defaultSignal;
		try {
			return (await poolFor(memoryMb).run({ task, input }, { transferList: opts.transferList as never, signal, filename: opts.filename })) as T;
		} catch (e) {
			if ((e as { code?: string }).code === 'ERR_WORKER_OUT_OF_MEMORY' || /out of memory/i.test(String((e as Error)?.message))) {
				throw new ThreadOutOfMemory(memoryMb);
			}
			throw e;
		}
	};
}

/** A task needed more memory than its job kind allows. */
export class ThreadOutOfMemory extends Error {
	constructor(public memoryMb: number) {
		super(`The computation needed more than its memory limit of ${memoryMb} MB and was stopped.`);
		this.name = 'ThreadOutOfMemory';
	}
}

export async function closeThreadPools(): Promise<void> {
	const all = [...pools.values()];
	pools.clear();
	await Promise.all(all.map((p) => p.destroy().catch(() => undefined)));
}
