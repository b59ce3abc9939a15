/**
 * The job queue in one process: idempotency, claiming with SKIP LOCKED, leases, retries with
 * backoff, cancel, progress, per-kind limits, the follow-up hooks, and the drain used by seeds.
 */
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { addFinishedHook, cancelJob, enqueueJob, getJob, JobFailure, registerJobKind, runQueuedJobs, startWorker, closeThreadPools } from '../../src/lib/server/jobs';
import { claimJob, failJob, finishJob, heartbeat } from '../../src/lib/server/jobs/queue';
import { FsObjectStore } from '../../src/lib/server/storage';
import { createTestDatabase, type TestDb } from '../helpers/db';

const threadTasks = path.resolve(import.meta.dirname, '../fixtures/jobs/thread-tasks.mjs');
const store = new FsObjectStore(path.join(process.env.TMPDIR ?? '/tmp', 'cairnfield-jobs-test-store'));
const wait = (ms: number) => new Promise((r) => setTimeout(r, ms));

async function until<T>(what: string, fn: () => Promise<T | null | undefined | false>, ms = 15_000): Promise<T> {
	const end = Date.now() + ms;
	for (;;) {
		const v = await fn();
		if (v) return v;
		if (Date.now() > end) throw new Error(`timed out waiting for ${what}`);
		await wait(50);
	}
}

let calls: Record<string, number> = {};
registerJobKind<{ n: number }, { doubled: number }>({
	kind: 'test-double',
	limits: { timeMs: 10_000, memoryMb: 64 },
	async handler({ payload, reportProgress }) {
		calls.double = (calls.double ?? 0) + 1;
		reportProgress({ step: 1, of: 1 });
		return { doubled: payload.n * 2 };
	}
});
registerJobKind({
	kind: 'test-flaky',
	limits: { timeMs: 10_000, memoryMb: 64 },
	maxAttempts: 3,
	backoffMs: 100,
	async handler({ job }) {
		calls.flaky = (calls.flaky ?? 0) + 1;
		if (job.attempts < 3) throw new Error(`transient trouble on attempt ${job.attempts}`);
		return { attempt: job.attempts };
	}
});
registerJobKind({
	kind: 'test-bad-input',
	limits: { timeMs: 10_000, memoryMb: 64 },
	async handler() {
		calls.bad = (calls.bad ?? 0) + 1;
		throw new JobFailure('The input names a layer that does not exist.');
	}
});
registerJobKind({
	kind: 'test-slow',
	limits: { timeMs: 400, memoryMb: 64 },
	async handler({ signal }) {
		await new Promise((resolve, reject) => {
			const t = setTimeout(resolve, 5000);
			signal.addEventListener('abort', () => (clearTimeout(t), reject(signal.reason)));
		});
		return {};
	}
});
registerJobKind({
	kind: 'test-cancellable',
	limits: { timeMs: 20_000, memoryMb: 64 },
	async handler({ signal, reportProgress }) {
		for (let i = 0; i < 200; i++) {
			if (signal.aborted) throw signal.reason;
			reportProgress({ i });
			await wait(50);
		}
		return {};
	}
});
registerJobKind({
	kind: 'test-memory',
	limits: { timeMs: 30_000, memoryMb: 32 },
	maxAttempts: 3,
	async handler({ runInThread, payload }) {
		return { held: await runInThread('allocate', payload, { filename: threadTasks }) };
	}
});

describe('job queue', () => {
	let t: TestDb;
	beforeAll(async () => {
		t = await createTestDatabase();
	});
	afterAll(async () => {
		await closeThreadPools();
		await t?.drop();
	});

	it('enqueueJob with one idempotency key twice is one job', async () => {
		const a = await enqueueJob(t.db, { kind: 'test-double', payload: { n: 1 }, idempotencyKey: 'same-key' });
		const b = await enqueueJob(t.db, { kind: 'test-double', payload: { n: 1 }, idempotencyKey: 'same-key' });
		expect(b.id).toBe(a.id);
		expect(a.state).toBe('queued');
		expect((await t.db('jobs').where({ idempotency_key: 'same-key' }).count({ n: '*' }))[0].n).toBe(1);
		await t.db('jobs').del();
	});

	it('an enqueue inside a rolled-back transaction leaves no job', async () => {
		await t.db.transaction(async (trx) => {
			await enqueueJob(trx, { kind: 'test-double', payload: { n: 2 } });
			throw new Error('roll back');
		}).catch(() => undefined);
		expect((await t.db('jobs').count({ n: '*' }))[0].n).toBe(0);
	});

	it('two claims at the same moment never take the same job (SELECT … FOR UPDATE SKIP LOCKED)', async () => {
		for (let i = 0; i < 6; i++) await enqueueJob(t.db, { kind: 'test-double', payload: { n: i } });
		const claims = await Promise.all(Array.from({ length: 8 }, (_, i) => claimJob(t.db, `w${i}`, ['test-double'], 30_000)));
		const ids = claims.filter((c) => c !== null).map((c) => c!.job.id);
		expect(ids.length).toBe(6); // 6 jobs, 8 claimers: two find nothing
		expect(new Set(ids).size).toBe(6);
		await t.db('jobs').del();
	});

	it('a job whose lease ran out is claimed again, and the first claimant can no longer store a result', async () => {
		const job = await enqueueJob(t.db, { kind: 'test-double', payload: { n: 3 } });
		const first = (await claimJob(t.db, 'dead-worker', ['test-double'], 200))!;
		expect(first.job.id).toBe(job.id);
		expect(await claimJob(t.db, 'other', ['test-double'], 30_000)).toBeNull(); // lease still held
		await wait(300);
		const second = (await claimJob(t.db, 'other', ['test-double'], 30_000))!;
		expect(second.job.id).toBe(job.id);
		expect(second.job.attempts).toBe(2);
		expect((await heartbeat(t.db, first, 30_000)).held).toBe(false);
		expect(await finishJob(t.db, first, { doubled: -1 })).toBe(false);
		expect(await finishJob(t.db, second, { doubled: 6 })).toBe(true);
		const row = (await getJob(t.db, job.id))!;
		expect(row.state).toBe('finished');
		expect(row.result).toEqual({ doubled: 6 });
		await t.db('jobs').del();
	});

	it('a job whose worker died on its last attempt is marked failed with a readable message', async () => {
		const job = await enqueueJob(t.db, { kind: 'test-double', payload: { n: 3 }, maxAttempts: 1 });
		await claimJob(t.db, 'dead-worker', ['test-double'], 100);
		await wait(200);
		expect(await claimJob(t.db, 'other', ['test-double'], 30_000)).toBeNull();
		const row = (await getJob(t.db, job.id))!;
		expect(row.state).toBe('failed');
		expect(row.error).toMatch(/stopped before it finished/);
		await t.db('jobs').del();
	});

	it('failJob with attempts left queues the job again after a backoff that doubles', async () => {
		const job = await enqueueJob(t.db, { kind: 'test-double', payload: {}, maxAttempts: 3 });
		const c1 = (await claimJob(t.db, 'w', ['test-double'], 30_000))!;
		expect(await failJob(t.db, c1, { message: 'boom', retry: true, backoffMs: 1000 })).toBe('queued');
		const gap = async () => {
			const [[r]] = (await t.db.raw('SELECT TIMESTAMPDIFF(MICROSECOND, CURRENT_TIMESTAMP(3), run_after) / 1000 AS ms FROM jobs WHERE id = ?', [job.id])) as [[{ ms: number }]];
			return Number(r.ms);
		};
		const g1 = await gap();
		expect(g1).toBeGreaterThan(800);
		expect(g1).toBeLessThan(1200);
		expect(await claimJob(t.db, 'w', ['test-double'], 30_000)).toBeNull(); // not due yet
		await t.db('jobs').where({ id: job.id }).update({ run_after: t.db.raw('CURRENT_TIMESTAMP(3)') });
		const c2 = (await claimJob(t.db, 'w', ['test-double'], 30_000))!;
		await failJob(t.db, c2, { message: 'boom again', retry: true, backoffMs: 1000 });
		const g2 = await gap();
		expect(g2).toBeGreaterThan(1800); // 1000 · 2^(2−1)
		expect(g2).toBeLessThan(2300);
		await t.db('jobs').where({ id: job.id }).update({ run_after: t.db.raw('CURRENT_TIMESTAMP(3)') });
		const c3 = (await claimJob(t.db, 'w', ['test-double'], 30_000))!;
		expect(await failJob(t.db, c3, { message: 'Still broken.', retry: true })).toBe('failed');
		expect((await getJob(t.db, job.id))!.error).toBe('Still broken.');
		await t.db('jobs').del();
	});

	it('a worker runs jobs, stores results and progress, retries transient errors and fails bad input at once', async () => {
		calls = {};
		const ok = await enqueueJob(t.db, { kind: 'test-double', payload: { n: 21 } });
		const flaky = await enqueueJob(t.db, { kind: 'test-flaky', payload: {} });
		const bad = await enqueueJob(t.db, { kind: 'test-bad-input', payload: {} });
		await runQueuedJobs(t.db, store, { kinds: ['test-double', 'test-flaky', 'test-bad-input'], timeoutMs: 20_000 });
		const okRow = (await getJob(t.db, ok.id))!;
		expect(okRow.state).toBe('finished');
		expect(okRow.result).toEqual({ doubled: 42 });
		expect(okRow.progress).toEqual({ step: 1, of: 1 });
		const flakyRow = (await getJob(t.db, flaky.id))!;
		expect(flakyRow.state).toBe('finished');
		expect(flakyRow.attempts).toBe(3);
		expect(calls.flaky).toBe(3);
		const badRow = (await getJob(t.db, bad.id))!;
		expect(badRow.state).toBe('failed');
		expect(badRow.error).toBe('The input names a layer that does not exist.');
		expect(calls.bad).toBe(1);
		await t.db('jobs').del();
	});

	it('a job over its time limit fails cleanly and the worker carries on', async () => {
		const slow = await enqueueJob(t.db, { kind: 'test-slow', payload: {} });
		const next = await enqueueJob(t.db, { kind: 'test-double', payload: { n: 1 } });
		await runQueuedJobs(t.db, store, { kinds: ['test-slow', 'test-double'], concurrency: 1, timeoutMs: 20_000 });
		const row = (await getJob(t.db, slow.id))!;
		expect(row.state).toBe('failed');
		expect(row.error).toMatch(/longer than its limit of 0 s|longer than its limit/);
		expect(row.attempts).toBe(1); // a time limit is not retried
		expect((await getJob(t.db, next.id))!.state).toBe('finished');
		await t.db('jobs').del();
	});

	it('a job over its memory limit fails cleanly (the pool thread dies, not the worker) and the next job runs', async () => {
		const hog = await enqueueJob(t.db, { kind: 'test-memory', payload: { mb: 2000 } });
		const small = await enqueueJob(t.db, { kind: 'test-memory', payload: { mb: 4 } });
		await runQueuedJobs(t.db, store, { kinds: ['test-memory'], concurrency: 1, timeoutMs: 60_000 });
		const row = (await getJob(t.db, hog.id))!;
		expect(row.state).toBe('failed');
		expect(row.error).toMatch(/memory limit of 32 MB/);
		expect((await getJob(t.db, small.id))!).toMatchObject({ state: 'finished', result: { held: 4 } });
		await t.db('jobs').del();
	}, 90_000);

	it('cancelJob: a queued job is cancelled at once; a running one stops within about a second', async () => {
		const queued = await enqueueJob(t.db, { kind: 'test-cancellable', payload: {}, delayMs: 60_000 });
		expect((await cancelJob(t.db, queued.id))!.state).toBe('cancelled');

		const running = await enqueueJob(t.db, { kind: 'test-cancellable', payload: {} });
		const worker = startWorker({ db: t.db, store, kinds: ['test-cancellable'], pollMs: 50, log: () => undefined });
		try {
			await until('the job to report progress', async () => (await getJob(t.db, running.id))?.progress);
			const asked = (await cancelJob(t.db, running.id))!;
			expect(asked.state).toBe('running');
			expect(asked.cancel_requested).toBeTruthy();
			const done = await until('the cancel', async () => {
				const r = await getJob(t.db, running.id);
				return r?.state === 'cancelled' ? r : null;
			}, 5000);
			expect(done.error).toBe('Cancelled while it was running.');
		} finally {
			await worker.stop();
		}
		await t.db('jobs').del();
	});

	it('a finished hook runs in the transaction that stores the result; if it throws, nothing is stored', async () => {
		await t.db.schema.createTable('test_followups', (tb) => {
			tb.bigInteger('job_id');
			tb.integer('value');
		});
		let failOnce = true;
		registerJobKind({ kind: 'test-followup', limits: { timeMs: 5000, memoryMb: 64 }, backoffMs: 50, handler: async () => ({ value: 7 }) });
		addFinishedHook<{ value: number }>('test-followup', async (trx, job, result) => {
			await trx('test_followups').insert({ job_id: job.id, value: result.value });
			if (failOnce) {
				failOnce = false;
				throw new Error('follow-up failed');
			}
		});
		const job = await enqueueJob(t.db, { kind: 'test-followup', payload: {} });
		await runQueuedJobs(t.db, store, { kinds: ['test-followup'], timeoutMs: 20_000 });
		expect((await getJob(t.db, job.id))!.state).toBe('finished');
		expect(await t.db('test_followups').select('job_id', 'value')).toEqual([{ job_id: job.id, value: 7 }]);
	});
});
