/**
 * `proposal-run`: one placement run of a proposal. The handler prepares the inputs (recipe
 * version, zone set, sensors, working grid; see services/placement), runs the engine twice in the
 * thread pool (the sensors where they stand, then the strategy), reports {iteration, maxIterations,
 * cost, coverage, history} as progress, and returns the revision snapshot. The finished hook
 * stores it as the proposal's next revision in the transaction that marks the job finished, so a
 * finished run always has its revision and a retried job never makes two.
 */
import { MessageChannel } from 'node:worker_threads';
import type { HistoryEntry, PlacementResult } from '../../../engine/types';
import { executePlacement, preparePlacement, revisionSnapshot, type PlaceRunner, type RevisionSnapshot } from '../../services/placement';
import { createRevisionFromResult } from '../../services/proposals';
import { PROPOSAL_RUN, type ProposalRunPayload } from '../../services/runs';
import { ServiceError } from '../../services/errors';
import { JobFailure, type JobKind, type JobContext } from '../registry';
import type { PlaceTaskInput } from '../threads/tasks';

type PlaceReply = { ok: true; result: PlacementResult } | { ok: false; field: string; message: string };

/** Largest number of history points kept in the progress row (the revision keeps them all). */
const PROGRESS_POINTS = 2000;

function threadRunner(ctx: JobContext<ProposalRunPayload>): PlaceRunner {
	return async (prep, sensors, options, onIteration) => {
		const channel = new MessageChannel();
		if (onIteration) channel.port1.on('message', (e: HistoryEntry) => onIteration(e));
		try {
			const input: PlaceTaskInput = { grid: prep.grid, zones: prep.zones, sensors, options, port: onIteration ? channel.port2 : undefined };
			const reply = await ctx.runInThread<PlaceReply>('placeSensors', input, { transferList: onIteration ? [channel.port2] : [], signal: ctx.signal });
			if (!reply.ok) throw new JobFailure(`The placement cannot run: ${reply.message}`);
			return reply.result;
		} finally {
			channel.port1.close();
		}
	};
}

export const proposalRunKind: JobKind<ProposalRunPayload, RevisionSnapshot> = {
	kind: PROPOSAL_RUN,
	limits: { timeMs: Number(process.env.JOBS_PLACEMENT_TIME_S ?? 15 * 60) * 1000, memoryMb: Number(process.env.JOBS_PLACEMENT_MEMORY_MB ?? 1024) },
	maxAttempts: 3,
	async handler(ctx) {
		const { payload, db, store, reportProgress } = ctx;
		try {
			const prep = await preparePlacement(db, store, payload.networkId, payload.params);
			const maxIterations = payload.params.maxIterations;
			const history: HistoryEntry[] = [];
			reportProgress({ iteration: 0, maxIterations, cost: null, coverage: null, history });
			const outcome = await executePlacement(prep, threadRunner(ctx), (e) => {
				if (history.length < PROGRESS_POINTS) history.push({ iteration: e.iteration, cost: e.cost, coverage: e.coverage });
				reportProgress({ iteration: e.iteration, maxIterations, cost: e.cost, coverage: e.coverage, history });
			});
			return revisionSnapshot(prep, outcome);
		} catch (e) {
			if (e instanceof ServiceError) throw new JobFailure(e.message);
			throw e;
		}
	},
	async onFinished(trx, job, snapshot) {
		const p = job.payload as ProposalRunPayload;
		await createRevisionFromResult(trx, { proposalId: p.proposalId, networkId: p.networkId, organisationId: p.organisationId, authorId: p.authorId, jobId: Number(job.id) }, snapshot);
	}
};
