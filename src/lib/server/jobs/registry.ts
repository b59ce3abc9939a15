/**
 * The job kinds this process knows: a name, the handler that does the work, its limits, and the
 * follow-up steps that run in the transaction that stores the outcome.
 *
 * A handler receives a JobContext and returns a JSON-serialisable result. It throws JobFailure for
 * a failure that a retry cannot mend (bad input); any other error is retried with backoff up to the
 * kind's maxAttempts. It should pass `signal` to long work and stop when it aborts (cancel, time
 * limit, lost lease, worker stopping).
 */
import type { Knex } from 'knex';
import type { ObjectStore } from '../storage/object-store';
import type { JobRow } from './queue';
import type { ThreadRunner } from './threads';

export interface JobContext<P = unknown> {
	job: JobRow;
	payload: P;
	db: Knex;
	store: ObjectStore;
	/** Stores progress (any JSON object); written to the database at most about once a second. */
	reportProgress(progress: Record<string, unknown>): void;
	/** Aborts on cancel, on the kind's time limit, on a lost lease and when the worker stops. */
	signal: AbortSignal;
	/** Runs a CPU task of ./threads/tasks.ts in the worker-thread pool, with the kind's memory limit. */
	runInThread: ThreadRunner;
}

export interface JobOutcome {
	state: 'finished' | 'failed' | 'cancelled';
	/** The readable message of a failed or cancelled job. */
	message?: string;
}

/** Runs inside the transaction that marks the job finished; a throw rolls the result back and retries. */
export type FinishedHook<R = unknown> = (trx: Knex.Transaction, job: JobRow, result: R) => Promise<void>;
/** Runs inside the transaction that marks the job failed or cancelled (never for a retry). */
export type FailedHook = (trx: Knex.Transaction, job: JobRow, outcome: JobOutcome) => Promise<void>;

export interface JobKindLimits {
	/** The job fails (no retry) when it runs longer than this. */
	timeMs: number;
	/** Heap limit of the worker thread that runs its CPU tasks (resourceLimits.maxOldGenerationSizeMb). */
	memoryMb: number;
}

export interface JobKind<P = any, R = any> {
	kind: string;
	handler: (ctx: JobContext<P>) => Promise<R>;
	limits: JobKindLimits;
	/** Attempts before the job is marked failed (default 3). */
	maxAttempts?: number;
	/** First retry after this many ms, doubling each attempt (default 5000; capped at 5 minutes). */
	backoffMs?: number;
	onFinished?: FinishedHook<R>;
	onFailed?: FailedHook;
}

/** A failure that no retry will mend: the job is marked failed at once with this message. */
export class JobFailure extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'JobFailure';
	}
}

export const DEFAULT_LIMITS: JobKindLimits = { timeMs: 10 * 60_000, memoryMb: 1024 };

const kinds = new Map<string, JobKind>();
const finishedHooks = new Map<string, FinishedHook[]>();
const failedHooks = new Map<string, FailedHook[]>();

export function registerJobKind<P, R>(def: JobKind<P, R>): void {
	if (!/^[a-z][a-z0-9_.-]{0,63}$/.test(def.kind)) throw new Error(`job kind names are lower-case words, not ${JSON.stringify(def.kind)}`);
	kinds.set(def.kind, def as JobKind);
}

/**
 * Attaches a follow-up step to a kind, run after the kind's own onFinished in the same transaction
 * that stores the result (e.g. turning a placement result into a proposal revision).
 */
export function addFinishedHook<R = unknown>(kind: string, hook: FinishedHook<R>): void {
	finishedHooks.set(kind, [...(finishedHooks.get(kind) ?? []), hook as FinishedHook]);
}

/** Attaches a step run in the transaction that marks a job of `kind` failed or cancelled. */
export function addFailedHook(kind: string, hook: FailedHook): void {
	failedHooks.set(kind, [...(failedHooks.get(kind) ?? []), hook]);
}

export function jobKind(kind: string): JobKind | undefined {
	return kinds.get(kind);
}

export function registeredKinds(): string[] {
	return [...kinds.keys()];
}

export async function runFinishedHooks(trx: Knex.Transaction, job: JobRow, result: unknown): Promise<void> {
	const def = kinds.get(job.kind);
	if (def?.onFinished) await def.onFinished(trx, job, result);
	for (const h of finishedHooks.get(job.kind) ?? []) await h(trx, job, result);
}

export async function runFailedHooks(trx: Knex.Transaction, job: JobRow, outcome: JobOutcome): Promise<void> {
	const def = kinds.get(job.kind);
	if (def?.onFailed) await def.onFailed(trx, job, outcome);
	for (const h of failedHooks.get(job.kind) ?? []) await h(trx, job, outcome);
}
