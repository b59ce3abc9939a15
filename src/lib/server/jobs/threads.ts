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

interface Pool {
	pool: Piscina;
	/** Why a thread of this pool died outside a task (then the pool is retired). */
	fatal?: Error;
}

const pools = new Map<number, Pool>();
let maxThreadsPerPool = 1;

/** How many threads each pool may run at once (the worker's concurrency). */
export function setThreadLimit(n: number): void {
	maxThreadsPerPool = Math.max(1, n);
}

function poolFor(memoryMb: number): Pool {
	let entry = pools.get(memoryMb);
	if (!entry) {
		const pool = new Piscina({
			filename: DEFAULT_TASKS_FILE,
			minThreads: 0,
			maxThreads: maxThreadsPerPool,
			// Threads start slowly (tsx, the tasks' modules: seconds on a busy machine): keep idle ones a while.
			idleTimeout: 10 * 60_000,
			resourceLimits: { maxOldGenerationSizeMb: memoryMb, maxYoungGenerationSizeMb: Math.min(64, Math.max(8, Math.round(memoryMb / 16))) }
		});
		const made: Pool = { pool };
		// A thread that dies outside a task (while it starts: a heap limit below what loading the
		// tasks needs) is reported here, not to a task; piscina then starts no more threads for this
		// pool and its waiting tasks would wait for ever. Retire the pool: destroying it rejects them
		// (as out of memory, through `fatal`), and the next task gets a fresh pool. Without this
		// listener the error would end the whole worker process.
		pool.on('error', (err: Error) => {
			made.fatal = err;
			if (pools.get(memoryMb) === made) pools.delete(memoryMb);
			pool.destroy().catch(() => undefined);
		});
		entry = made;
		pools.set(memoryMb, entry);
	}
	return entry;
}

const outOfMemory = (e: unknown) => (e as { code?: string })?.code === 'ERR_WORKER_OUT_OF_MEMORY' || /out of memory/i.test(String((e as Error)?.message));

/** A runner bound to one memory limit (a job kind's limits.memoryMb). */
export function threadRunner(memoryMb: number, defaultSignal?: AbortSignal): ThreadRunner {
	return async <T>(task: string, input: unknown, opts: ThreadRunOptions = {}) => {
		const signal = opts.signal ?? defaultSignal;
		const entry = poolFor(memoryMb);
		try {
			return (await entry.pool.run({ task, input }, { transferList: opts.transferList as never, signal, filename: opts.filename })) as T;
		} catch (e) {
			if (outOfMemory(e) || (entry.fatal && outOfMemory(entry.fatal))) throw new ThreadOutOfMemory(memoryMb);
			if (entry.fatal) throw new Error(`The computation's thread stopped: ${entry.fatal.message}`);
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
	await Promise.all(all.map((p) => p.pool.destroy().catch(() => undefined)));
}
