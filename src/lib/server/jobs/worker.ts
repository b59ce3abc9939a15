/**
 * The worker loop: claims due jobs of the registered kinds, runs up to `concurrency` at once,
 * renews their leases and writes their progress about once a second, stores the outcome, and on
 * stop() finishes or hands back what it holds. Database errors (MariaDB restarting, a dropped
 * connection) are logged and retried with a growing pause: the pool reconnects by itself.
 */
import os from 'node:os';
import { randomBytes } from 'node:crypto';
import type { Knex } from 'knex';
import type { ObjectStore } from '../storage/object-store';
import { claimJob, failJob, finishJob, handBackJob, heartbeat, type Claim } from './queue';
import { DEFAULT_LIMITS, JobFailure, jobKind, registeredKinds, type JobKind } from './registry';
import { setThreadLimit, threadRunner, ThreadOutOfMemory } from './threads';

export interface WorkerOptions {
	db: Knex;
	store: ObjectStore;
	/** Jobs run at once; default the number of cores (JOBS_CONCURRENCY overrides it in the worker command). */
	concurrency?: number;
	/** Kinds this worker takes; default every registered kind. */
	kinds?: string[];
	/** Lease length; renewed every leaseMs/3 (default 30 s). A dead worker's job is retaken after it. */
	leaseMs?: number;
	/** Pause between polls when nothing is due (default 1 s). */
	pollMs?: number;
	/** How long stop() lets running jobs finish before it hands them back (default 20 s). */
	stopGraceMs?: number;
	workerId?: string;
	log?: (line: string) => void;
}

export interface Worker {
	id: string;
	/** Jobs this worker is running now. */
	running(): number;
	/** Claim again at once (e.g. right after queueing). */
	wake(): void;
	/** Stop claiming; let running jobs finish within the grace period, then hand back the rest. */
	stop(): Promise<void>;
	/** Resolves when the loop has ended after stop(). */
	done: Promise<void>;
}

const HEARTBEAT_MS = 1000;

class Stopping extends Error {}
class LeaseLost extends Error {}

export function errorMessage(e: unknown): string {
	if (e instanceof Error) return e.message || e.name;
	return String(e);
}

export function startWorker(opts: WorkerOptions): Worker {
	const { db, store } = opts;
	const id = opts.workerId ?? `${os.hostname()}:${process.pid}:${randomBytes(3).toString('hex')}`;
	const concurrency = Math.max(1, opts.concurrency ?? os.availableParallelism());
	const leaseMs = opts.leaseMs ?? 30_000;
	const pollMs = opts.pollMs ?? 1000;
	const stopGraceMs = opts.stopGraceMs ?? 20_000;
	const log = opts.log ?? ((line: string) => console.log(`[worker ${id}] ${line}`));
	setThreadLimit(concurrency);

	const active = new Map<number, { claim: Claim; controller: AbortController; done: Promise<void>; stop?: () => void }>();
	let stopping = false;
	let wakeUp: (() => void) | null = null;
	const sleep = (ms: number) =>
		new Promise<void>((resolve) => {
			const t = setTimeout(() => {
				wakeUp = null;
				resolve();
			}, ms);
			wakeUp = () => {
				clearTimeout(t);
				wakeUp = null;
				resolve();
			};
		});

	async function runOne(claim: Claim, def: JobKind, controller: AbortController, control: { stop?: () => void }): Promise<void> {
		const { job } = claim;
		const limits = { ...DEFAULT_LIMITS, ...def.limits };
		let progress: Record<string, unknown> | undefined;
		let dirty = false;
		let reason: 'cancelled' | 'timeout' | 'lost' | 'stopping' | null = null;
		const abort = (why: NonNullable<typeof reason>) => {
			if (!reason) reason = why;
			controller.abort(why === 'timeout' ? new JobFailure(`The job took longer than its limit of ${Math.round(limits.timeMs / 1000)} s and was stopped.`) : why === 'stopping' ? new Stopping('worker stopping') : why === 'lost' ? new LeaseLost('lease lost') : new Error('Cancelled.'));
		};
		control.stop = () => abort('stopping');
		const timer = setTimeout(() => abort('timeout'), limits.timeMs);
		let lastRenew = Date.now();
		let beating = false;
		const beat = setInterval(async () => {
			if (beating) return;
			beating = true;
			try {
				const renew = Date.now() - lastRenew >= leaseMs / 3;
				if (!dirty && !renew && !controller.signal.aborted) {
					const r = await heartbeatCancelOnly();
					if (r) abort('cancelled');
					return;
				}
				const sent = dirty ? progress : undefined;
				dirty = false;
				const r = await heartbeat(db, claim, leaseMs, sent);
				lastRenew = Date.now();
				if (!r.held) abort('lost');
				else if (r.cancelRequested) abort('cancelled');
			} catch (e) {
				// The database is away: keep working; the lease covers a short outage.
				if (Date.now() - lastRenew > leaseMs) abort('lost');
				else log(`job ${job.id}: heartbeat failed (${errorMessage(e)}), retrying`);
			} finally {
				beating = false;
			}
		}, HEARTBEAT_MS);
		async function heartbeatCancelOnly(): Promise<boolean> {
			const r = await db('jobs').select('cancel_requested').where({ id: job.id }).first();
			return Boolean(r?.cancel_requested);
		}

		try {
			const result = await def.handler({
				job,
				payload: job.payload,
				db,
				store,
				signal: controller.signal,
				reportProgress(p) {
					progress = p;
					dirty = true;
				},
				runInThread: threadRunner(limits.memoryMb, controller.signal)
			});
			clearInterval(beat);
			if (controller.signal.aborted) throw controller.signal.reason;
			const stored = await retryDb(() => finishJob(db, claim, result, progress));
			log(stored ? `job ${job.id} (${job.kind}) finished` : `job ${job.id} (${job.kind}) finished but its lease had passed to another worker; result dropped`);
		} catch (e) {
			clearInterval(beat);
			const cause = controller.signal.aborted ? controller.signal.reason : e;
			if (reason === 'lost') {
				log(`job ${job.id}: lease lost, stopped`);
			} else if (reason === 'stopping') {
				await retryDb(() => handBackJob(db, claim));
				log(`job ${job.id}: handed back`);
			} else {
				const cancelled = reason === 'cancelled';
				const retry = !cancelled && reason !== 'timeout' && !(cause instanceof JobFailure) && !(cause instanceof ThreadOutOfMemory);
				const message = cancelled ? 'Cancelled while it was running.' : errorMessage(cause);
				const state = await retryDb(() => failJob(db, claim, { message, retry, cancelled, backoffMs: def.backoffMs }));
				log(`job ${job.id} (${job.kind}) ${state === 'queued' ? 'will be retried' : state}: ${message}`);
			}
		} finally {
			clearTimeout(timer);
			clearInterval(beat);
		}
	}

	/** Outcome writes must not be lost to a short database outage: retry until the lease would be gone. */
	async function retryDb<T>(fn: () => Promise<T>): Promise<T> {
		const until = Date.now() + leaseMs;
		for (let pause = 200; ; pause = Math.min(pause * 2, 3000)) {
			try {
				return await fn();
			} catch (e) {
				if (Date.now() > until) throw e;
				log(`database write failed (${errorMessage(e)}), retrying`);
				await new Promise((r) => setTimeout(r, pause));
			}
		}
	}

	async function loop(): Promise<void> {
		let pause = pollMs;
		while (!stopping) {
			if (active.size >= concurrency) {
				await sleep(pollMs);
				continue;
			}
			let claim: Claim | null = null;
			try {
				claim = await claimJob(db, id, opts.kinds ?? registeredKinds(), leaseMs);
				pause = pollMs;
			} catch (e) {
				log(`cannot claim jobs (${errorMessage(e)}); trying again in ${Math.round(pause / 100) / 10} s`);
				await sleep(pause);
				pause = Math.min(pause * 2, 10_000);
				continue;
			}
			if (!claim) {
				await sleep(pollMs);
				continue;
			}
			const def = jobKind(claim.job.kind);
			if (!def) {
				// Only claimed kinds are registered, so this is a programming error: fail it readably.
				await failJob(db, claim, { message: `No worker knows the job kind "${claim.job.kind}".`, retry: false }).catch(() => undefined);
				continue;
			}
			const controller = new AbortController();
			const c = claim;
			const entry: { claim: Claim; controller: AbortController; done: Promise<void>; stop?: () => void } = { claim: c, controller, done: Promise.resolve() };
			entry.done = runOne(c, def, controller, entry)
				.catch((e) => log(`job ${c.job.id}: ${errorMessage(e)}`))
				.finally(() => {
					active.delete(c.job.id);
					wakeUp?.();
				});
			active.set(c.job.id, entry);
			log(`job ${c.job.id} (${c.job.kind}) started, attempt ${c.job.attempts}`);
		}
	}

	const loopDone = loop();
	let stopped: Promise<void> | null = null;
	const worker: Worker = {
		id,
		running: () => active.size,
		wake: () => wakeUp?.(),
		stop() {
			stopped ??= (async () => {
				stopping = true;
				wakeUp?.();
				await loopDone;
				const all = [...active.values()];
				if (all.length) log(`stopping: waiting up to ${Math.round(stopGraceMs / 1000)} s for ${all.length} job(s)`);
				const grace = new Promise<'late'>((r) => setTimeout(() => r('late'), stopGraceMs).unref());
				const finished = Promise.all(all.map((a) => a.done)).then(() => 'done' as const);
				if ((await Promise.race([finished, grace])) === 'late') {
					for (const a of active.values()) a.stop?.();
					await finished;
				}
			})();
			return stopped;
		},
		get done() {
			return stopped ?? loopDone;
		}
	};
	return worker;
}
