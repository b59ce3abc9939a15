/**
 * The job queue's rows: enqueue, read, cancel (for services and routes), and claim, heartbeat,
 * finish, fail and hand back (for the worker). Every time comparison uses the database's clock.
 *
 * States: queued → running → finished | failed | cancelled. A running job belongs to the worker
 * whose claim token is in lease_owner until lease_until; every write of the worker checks that
 * token, so a worker that lost its lease (it stalled and another worker took the job over) can
 * never store a second result.
 */
import { randomBytes } from 'node:crypto';
import type { Knex } from 'knex';
import type { Db } from '../db/knex';
import { jobKind, runFailedHooks, runFinishedHooks, type JobOutcome } from './registry';

import type { Job, JobState } from '../../api/client';

export type { JobState };
export const JOB_STATES: readonly JobState[] = ['queued', 'running', 'finished', 'failed', 'cancelled'];

export interface JobRow {
	id: number;
	kind: string;
	network_id: number | null;
	payload: unknown;
	state: JobState;
	priority: number;
	attempts: number;
	max_attempts: number;
	run_after: Date;
	lease_owner: string | null;
	lease_until: Date | null;
	cancel_requested: number | boolean;
	progress: Record<string, unknown> | null;
	result: unknown;
	error: string | null;
	idempotency_key: string | null;
	created_by: number | null;
	created_at: Date;
	started_at: Date | null;
	finished_at: Date | null;
	updated_at: Date;
}

/** A job as the API returns it (`{job: {...}}`): the typed client's Job, with Dates until json() writes them. */
export type JobView = Omit<Job, 'createdAt' | 'startedAt' | 'finishedAt'> & { createdAt: Date; startedAt: Date | null; finishedAt: Date | null };

const COLUMNS = ['id', 'kind', 'network_id', 'payload', 'state', 'priority', 'attempts', 'max_attempts', 'run_after', 'lease_owner', 'lease_until', 'cancel_requested', 'progress', 'result', 'error', 'idempotency_key', 'created_by', 'created_at', 'started_at', 'finished_at', 'updated_at'];

/** mysql2 returns MariaDB JSON columns parsed on some server versions and as text on others. */
function parseJson(v: unknown): unknown {
	if (typeof v !== 'string') return v ?? null;
	try {
		return JSON.parse(v);
	} catch {
		return v;
	}
}

function toRow(r: Record<string, unknown>): JobRow {
	return { ...(r as unknown as JobRow), payload: parseJson(r.payload), progress: parseJson(r.progress) as JobRow['progress'], result: parseJson(r.result) };
}

export function jobView(r: JobRow): JobView {
	return {
		id: Number(r.id),
		kind: r.kind,
		networkId: r.network_id,
		state: r.state,
		progress: r.progress,
		result: r.state === 'finished' ? r.result : null,
		error: r.error,
		attempts: r.attempts,
		maxAttempts: r.max_attempts,
		cancelRequested: Boolean(r.cancel_requested),
		createdAt: r.created_at,
		startedAt: r.started_at,
		finishedAt: r.finished_at
	};
}

export interface EnqueueInput {
	kind: string;
	payload: unknown;
	/** The same key twice is one job: the second call returns the first job, whatever its state. */
	idempotencyKey?: string | null;
	networkId?: number | null;
	createdBy?: number | null;
	/** Higher runs first (default 0). */
	priority?: number;
	/** Default 3; a kind's own maxAttempts is used when the caller gives none. */
	maxAttempts?: number;
	/** Do not start before this many ms from now (default 0). */
	delayMs?: number;
}

const ER_DUP_ENTRY = 1062;

/**
 * Queues a job and returns its row. `db` may be a transaction: the job then appears only if that
 * transaction commits (store the input and queue its job together).
 */
export async function enqueueJob(db: Db, input: EnqueueInput): Promise<JobRow> {
	if (!/^[a-z][a-z0-9_.-]{0,63}$/.test(input.kind)) throw new Error(`unknown job kind ${JSON.stringify(input.kind)}`);
	const key = input.idempotencyKey ?? null;
	if (key !== null && (key.length === 0 || key.length > 191)) throw new Error('an idempotency key has 1 to 191 characters');
	const maxAttempts = input.maxAttempts ?? jobKind(input.kind)?.maxAttempts ?? 3;
	try {
		const [id] = await db('jobs').insert({
			kind: input.kind,
			network_id: input.networkId ?? null,
			payload: JSON.stringify(input.payload ?? {}),
			priority: input.priority ?? 0,
			max_attempts: Math.max(1, maxAttempts),
			run_after: db.raw('CURRENT_TIMESTAMP(3) + INTERVAL ? MICROSECOND', [Math.max(0, Math.round((input.delayMs ?? 0) * 1000))]),
			idempotency_key: key,
			created_by: input.createdBy ?? null
		});
		return (await findJob(db, id))!;
	} catch (e) {
		if (key !== null && (e as { errno?: number }).errno === ER_DUP_ENTRY) {
			const existing = await db('jobs').select(COLUMNS).where({ idempotency_key: key }).first();
			if (existing) return toRow(existing);
		}
		throw e;
	}
}

export async function findJob(db: Db, id: number): Promise<JobRow | null> {
	const r = await db('jobs').select(COLUMNS).where({ id }).first();
	return r ? toRow(r) : null;
}

/** The job, or null when there is none with this id (or it belongs to another network). */
export async function getJob(db: Db, id: number, scope: { networkId?: number } = {}): Promise<JobRow | null> {
	const q = db('jobs').select(COLUMNS).where({ id });
	if (scope.networkId !== undefined) q.andWhere({ network_id: scope.networkId });
	const r = await q.first();
	return r ? toRow(r) : null;
}

export async function findJobByKey(db: Db, idempotencyKey: string): Promise<JobRow | null> {
	const r = await db('jobs').select(COLUMNS).where({ idempotency_key: idempotencyKey }).first();
	return r ? toRow(r) : null;
}

/** The newest jobs of a network, optionally of some kinds and states. */
export async function listJobs(db: Db, filter: { networkId?: number; kinds?: string[]; states?: JobState[]; limit?: number } = {}): Promise<JobRow[]> {
	const q = db('jobs').select(COLUMNS).orderBy('id', 'desc').limit(filter.limit ?? 50);
	if (filter.networkId !== undefined) q.where({ network_id: filter.networkId });
	if (filter.kinds) q.whereIn('kind', filter.kinds);
	if (filter.states) q.whereIn('state', filter.states);
	return (await q).map(toRow);
}

/**
 * Cancels a job: a queued job is cancelled at once (its kind's failed hooks run, if the kind is
 * registered in this process); a running one is asked to stop, and its worker marks it cancelled
 * within about a second. A job that already ended is returned unchanged.
 */
export async function cancelJob(db: Knex, id: number, scope: { networkId?: number } = {}): Promise<JobRow | null> {
	return db.transaction(async (trx) => {
		const q = trx('jobs').select(COLUMNS).where({ id }).forUpdate();
		if (scope.networkId !== undefined) q.andWhere({ network_id: scope.networkId });
		const r = await q.first();
		if (!r) return null;
		const row = toRow(r);
		if (row.state === 'queued') {
			await trx('jobs').where({ id }).update({ state: 'cancelled', error: 'Cancelled before it started.', finished_at: trx.raw('CURRENT_TIMESTAMP(3)'), updated_at: trx.raw('CURRENT_TIMESTAMP(3)') });
			const after = (await findJob(trx, id))!;
			await runFailedHooks(trx, after, { state: 'cancelled', message: after.error ?? undefined });
			return after;
		}
		if (row.state === 'running') {
			await trx('jobs').where({ id }).update({ cancel_requested: true, updated_at: trx.raw('CURRENT_TIMESTAMP(3)') });
			return (await findJob(trx, id))!;
		}
		return row;
	});
}

// ---- the worker's side --------------------------------------------------------------------------

/** A claimed job: the row and the token that proves the claim. */
/**
 * Removes jobs that ended (finished, failed, cancelled) more than `days` days ago, by the
 * database's clock; queued and running jobs are never touched. Returns how many went. A purged
 * job's idempotency key is free again.
 */
export async function purgeEndedJobs(db: Db, days: number): Promise<number> {
	if (!(days > 0)) throw new RangeError(`keep ended jobs a positive number of days, not ${days}`);
	return db('jobs')
		.whereIn('state', ['finished', 'failed', 'cancelled'])
		.whereRaw('COALESCE(finished_at, updated_at) < CURRENT_TIMESTAMP(3) - INTERVAL ? SECOND', [Math.round(days * 86_400)])
		.delete();
}

export interface Claim {
	job: JobRow;
	token: string;
}

const GIVE_UP = 'The worker running this job stopped before it finished, on every attempt; it was not tried again.';

/**
 * Claims the next due job of one of `kinds`: a queued job whose run_after has come, or a running
 * job whose lease ran out (its worker died). The row is locked with SELECT … FOR UPDATE SKIP LOCKED
 * by its key and checked again under the lock, so concurrent workers never claim the same job and
 * never wait for each other. Returns null when nothing is due.
 */
export async function claimJob(db: Knex, workerId: string, kinds: string[], leaseMs: number): Promise<Claim | null> {
	if (kinds.length === 0) return null;
	const due = `((state = 'queued' AND run_after <= CURRENT_TIMESTAMP(3)) OR (state = 'running' AND lease_until < CURRENT_TIMESTAMP(3)))`;
	for (let round = 0; round < 5; round++) {
		// Candidates first, without locks: a locking scan would also lock the rows it only looked
		// at, and concurrent workers would then skip jobs nobody holds.
		const [candidates] = (await db.raw(
			`SELECT id FROM jobs WHERE kind IN (${kinds.map(() => '?').join(',')}) AND ${due} ORDER BY priority DESC, id LIMIT 8`,
			kinds
		)) as [Array<{ id: number }>];
		if (candidates.length === 0) return null;
		let gaveUp = false;
		for (const { id } of candidates) {
			const outcome = await db.transaction(async (trx) => {
				// Lock this one row by its key, skipping it if another worker holds it, and check it is still due.
				const [rows] = (await trx.raw(`SELECT id, state, attempts, max_attempts FROM jobs WHERE id = ? AND ${due} FOR UPDATE SKIP LOCKED`, [id])) as [
					Array<{ id: number; state: JobState; attempts: number; max_attempts: number }>
				];
				const r = rows[0];
				if (!r) return null;
				if (r.state === 'running' && r.attempts >= r.max_attempts) {
					// Its worker died on the last allowed attempt: give up with a message a person can read.
					await trx('jobs').where({ id: r.id }).update({ state: 'failed', error: GIVE_UP, lease_owner: null, lease_until: null, finished_at: trx.raw('CURRENT_TIMESTAMP(3)'), updated_at: trx.raw('CURRENT_TIMESTAMP(3)') });
					await runFailedHooks(trx, (await findJob(trx, r.id))!, { state: 'failed', message: GIVE_UP });
					return 'gave-up' as const;
				}
				const token = `${workerId}/${randomBytes(6).toString('hex')}`;
				await trx('jobs')
					.where({ id: r.id })
					.update({
						state: 'running',
						attempts: trx.raw('attempts + 1'),
						lease_owner: token,
						lease_until: trx.raw('CURRENT_TIMESTAMP(3) + INTERVAL ? MICROSECOND', [leaseMs * 1000]),
						started_at: trx.raw('COALESCE(started_at, CURRENT_TIMESTAMP(3))'),
						updated_at: trx.raw('CURRENT_TIMESTAMP(3)')
					});
				return { job: (await findJob(trx, r.id))!, token };
			});
			if (outcome === 'gave-up') gaveUp = true;
			else if (outcome) return outcome;
		}
		// Every candidate was taken by others (or given up): look again only if something changed.
		if (!gaveUp && candidates.length < 8) return null;
	}
	return null;
}

/**
 * Renews the lease and writes the latest progress. Returns whether the claim still holds and
 * whether a cancel was asked for.
 */
export async function heartbeat(db: Knex, claim: Claim, leaseMs: number, progress?: Record<string, unknown>): Promise<{ held: boolean; cancelRequested: boolean }> {
	const changes: Record<string, unknown> = {
		lease_until: db.raw('CURRENT_TIMESTAMP(3) + INTERVAL ? MICROSECOND', [leaseMs * 1000]),
		updated_at: db.raw('CURRENT_TIMESTAMP(3)')
	};
	if (progress !== undefined) changes.progress = JSON.stringify(progress);
	const n = await db('jobs').where({ id: claim.job.id, lease_owner: claim.token, state: 'running' }).update(changes);
	if (n === 0) return { held: false, cancelRequested: false };
	const r = await db('jobs').select('cancel_requested').where({ id: claim.job.id }).first();
	return { held: true, cancelRequested: Boolean(r?.cancel_requested) };
}

/** Locks the claimed row if the claim still holds. */
async function lockClaimed(trx: Knex.Transaction, claim: Claim): Promise<JobRow | null> {
	const r = await trx('jobs').select(COLUMNS).where({ id: claim.job.id, lease_owner: claim.token, state: 'running' }).forUpdate().first();
	return r ? toRow(r) : null;
}

/**
 * Stores the result and runs the kind's finished hooks in one transaction. Returns false (and
 * stores nothing) when the claim no longer holds.
 */
export async function finishJob(db: Knex, claim: Claim, result: unknown, progress?: Record<string, unknown>): Promise<boolean> {
	return db.transaction(async (trx) => {
		const row = await lockClaimed(trx, claim);
		if (!row) return false;
		await trx('jobs')
			.where({ id: row.id })
			.update({
				state: 'finished',
				result: JSON.stringify(result ?? null),
				...(progress !== undefined ? { progress: JSON.stringify(progress) } : {}),
				error: null,
				lease_owner: null,
				lease_until: null,
				finished_at: trx.raw('CURRENT_TIMESTAMP(3)'),
				updated_at: trx.raw('CURRENT_TIMESTAMP(3)')
			});
		await runFinishedHooks(trx, { ...row, state: 'finished', result: result ?? null }, result ?? null);
		return true;
	});
}

/**
 * Records a failure. With `retry` and attempts left, the job is queued again after
 * backoffMs · 2^(attempts−1) (capped at 5 minutes, plus up to 10 % jitter); otherwise it ends as
 * failed (or cancelled) and the kind's failed hooks run in the same transaction.
 */
export async function failJob(db: Knex, claim: Claim, outcome: { message: string; retry: boolean; cancelled?: boolean; backoffMs?: number }): Promise<'queued' | 'failed' | 'cancelled' | 'lost'> {
	return db.transaction(async (trx) => {
		const row = await lockClaimed(trx, claim);
		if (!row) return 'lost';
		const message = outcome.message.slice(0, 1000);
		if (!outcome.cancelled && outcome.retry && row.attempts < row.max_attempts) {
			const base = outcome.backoffMs ?? 5000;
			const delay = Math.min(5 * 60_000, base * 2 ** Math.max(0, row.attempts - 1)) * (1 + Math.random() * 0.1);
			await trx('jobs')
				.where({ id: row.id })
				.update({ state: 'queued', error: message, lease_owner: null, lease_until: null, run_after: trx.raw('CURRENT_TIMESTAMP(3) + INTERVAL ? MICROSECOND', [Math.round(delay * 1000)]), updated_at: trx.raw('CURRENT_TIMESTAMP(3)') });
			return 'queued';
		}
		const state: JobOutcome['state'] = outcome.cancelled ? 'cancelled' : 'failed';
		await trx('jobs').where({ id: row.id }).update({ state, error: message, lease_owner: null, lease_until: null, finished_at: trx.raw('CURRENT_TIMESTAMP(3)'), updated_at: trx.raw('CURRENT_TIMESTAMP(3)') });
		await runFailedHooks(trx, { ...row, state, error: message }, { state, message });
		return state;
	});
}

/** Gives a claimed job back to the queue untouched (a stopping worker); the attempt does not count. */
export async function handBackJob(db: Knex, claim: Claim): Promise<boolean> {
	const n = await db('jobs')
		.where({ id: claim.job.id, lease_owner: claim.token, state: 'running' })
		.update({ state: 'queued', attempts: db.raw('GREATEST(attempts - 1, 0)'), lease_owner: null, lease_until: null, run_after: db.raw('CURRENT_TIMESTAMP(3)'), updated_at: db.raw('CURRENT_TIMESTAMP(3)') });
	return n > 0;
}
