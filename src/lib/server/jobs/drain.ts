/**
 * Runs queued jobs to completion in this process: for seeds, scripts and tests that queue work and
 * need its outcome before they go on. Waits until no job of the given kinds is queued or running
 * (retries included), then stops its worker.
 */
import type { Knex } from 'knex';
import type { ObjectStore } from '../storage/object-store';
import { registeredKinds } from './registry';
import { startWorker } from './worker';

export interface DrainOptions {
	kinds?: string[];
	/** Give up (throw) after this long; default 10 minutes. */
	timeoutMs?: number;
	concurrency?: number;
	log?: (line: string) => void;
}

export async function runQueuedJobs(db: Knex, store: ObjectStore, opts: DrainOptions = {}): Promise<void> {
	const kinds = opts.kinds ?? registeredKinds();
	if (kinds.length === 0) return;
	const worker = startWorker({ db, store, kinds, concurrency: opts.concurrency ?? 2, pollMs: 50, leaseMs: 30_000, log: opts.log ?? (() => undefined) });
	const deadline = Date.now() + (opts.timeoutMs ?? 10 * 60_000);
	try {
		for (;;) {
			const row = await db('jobs').whereIn('kind', kinds).whereIn('state', ['queued', 'running']).count({ n: '*' }).first();
			if (Number(row?.n ?? 0) === 0 && worker.running() === 0) return;
			if (Date.now() > deadline) throw new Error(`queued jobs did not finish within ${Math.round((opts.timeoutMs ?? 600_000) / 1000)} s`);
			await new Promise((r) => setTimeout(r, 50));
		}
	} finally {
		await worker.stop();
	}
}
