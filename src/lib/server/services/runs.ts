/**
 * Placement runs of a proposal: queue one (or one per strategy on the same inputs), read one, cancel
 * one. A run is a job of kind PROPOSAL_RUN on the durable queue; its id is the job's id. The job
 * prepares the inputs, runs the engine in the worker's thread pool, reports {iteration, cost,
 * coverage} as progress, and its finished result becomes a revision in the transaction that stores
 * it (see ../jobs/kinds/proposal-run.ts).
 */
import type { Knex } from 'knex';
import type { Db } from '../db';
import { cancelJob, enqueueJob, getJob, listJobs, type JobRow } from '../jobs';
import { findRevisionByJob } from '../repositories/proposals';
import { findVersion, networkRecipeVersionId } from '../repositories/recipes';
import { findSensorType } from '../repositories/sensor-types';
import { findZoneSet, networkZoneSetId } from '../repositories/zones';
import { recordAudit } from '../repositories/audit';
import { STRATEGIES, type HistoryEntry, type Strategy } from '../../engine/types';
import { directRunner, executePlacement, preparePlacement, revisionSnapshot, runInput, type RevisionSnapshot, type RunInput } from './placement';
import type { ObjectStore } from '../storage/object-store';
import { createRevisionFromResult, getProposal } from './proposals';
import { ServiceError } from './errors';

export const PROPOSAL_RUN = 'proposal-run';

export interface ProposalRunPayload {
	networkId: number;
	organisationId: number;
	proposalId: number;
	authorId: number;
	params: RunInput;
}

export type RunState = 'queued' | 'running' | 'finished' | 'failed' | 'cancelled';

export interface RunProgress {
	iteration: number;
	maxIterations: number;
	cost: number | null;
	coverage: number | null;
	/** Every reported iteration so far (for the live chart). */
	history: HistoryEntry[];
}

export interface RunView {
	id: number;
	proposalId: number;
	strategy: Strategy;
	state: RunState;
	progress: RunProgress;
	revisionId?: number;
	error?: string;
	createdAt: string;
}

interface NetworkRef {
	id: number;
	organisation_id: number;
}

function parseParams(raw: unknown): RunInput {
	const parsed = runInput.safeParse(raw);
	if (!parsed.success) throw ServiceError.fromZod(parsed.error);
	return parsed.data;
}

/** The checks that need no heavy work, so that a run that cannot start is refused at once. */
async function checkParams(db: Db, networkId: number, p: RunInput): Promise<void> {
	const versionId = p.recipeVersionId ?? (await networkRecipeVersionId(db, networkId));
	if (versionId === null) throw new ServiceError(422, 'no_importance', 'Choose an importance recipe version for the network first (Importance tab).', 'recipeVersionId');
	if (!(await findVersion(db, networkId, versionId))) throw new ServiceError(422, 'invalid_input', 'No such recipe version in this network.', 'recipeVersionId');
	const zoneSetId = p.zoneSetId === null ? null : (p.zoneSetId ?? (await networkZoneSetId(db, networkId)));
	if (zoneSetId !== null && !(await findZoneSet(db, networkId, zoneSetId))) throw new ServiceError(422, 'invalid_input', 'No such zone set in this network.', 'zoneSetId');
	if (p.strategy === 'zone-balanced' && zoneSetId === null) throw new ServiceError(422, 'no_zones', 'Zone-balanced placement needs a zone set: choose one, or make one on the Area & zones tab.', 'zoneSetId');
	if (p.addTypeId !== undefined && !(await findSensorType(db, networkId, p.addTypeId))) throw new ServiceError(422, 'invalid_input', 'No such sensor type in this network.', 'addTypeId');
}

/** Queues one run per strategy given (the same inputs for each), with one audit entry each. */
export async function queueRuns(db: Knex, network: NetworkRef, actorId: number, proposalId: number, raw: unknown, strategies?: readonly Strategy[]): Promise<RunView[]> {
	const base = parseParams(raw);
	await getProposal(db, network.id, proposalId);
	const list = strategies ?? [base.strategy];
	for (const s of list) await checkParams(db, network.id, { ...base, strategy: s });
	const jobs = await db.transaction(async (trx) => {
		const out: JobRow[] = [];
		for (const strategy of list) {
			const payload: ProposalRunPayload = { networkId: network.id, organisationId: network.organisation_id, proposalId, authorId: actorId, params: { ...base, strategy } };
			const job = await enqueueJob(trx, { kind: PROPOSAL_RUN, payload, networkId: network.id, createdBy: actorId });
			await recordAudit(trx, { organisationId: network.organisation_id, actorUserId: actorId, action: 'run.queue', objectType: 'job', objectId: job.id, after: { proposalId, strategy } });
			out.push(job);
		}
		return out;
	});
	return Promise.all(jobs.map((j) => runView(db, j)));
}

/** Accepts any of the three strategies for "compare all three". */
export const ALL_STRATEGIES = STRATEGIES;

function progressOf(job: JobRow, params: RunInput): RunProgress {
	const p = (job.progress ?? {}) as Partial<RunProgress>;
	// Progress is stored at most about once a second: a finished run's last figures are its result's.
	const result = job.state === 'finished' ? (job.result as Partial<RevisionSnapshot> | null) : null;
	if (result?.metrics && result.outputs) {
		return { iteration: result.metrics.iterations, maxIterations: params.maxIterations, cost: result.metrics.cost, coverage: result.metrics.coverage, history: result.outputs.history };
	}
	return {
		iteration: Number(p.iteration ?? 0),
		maxIterations: Number(p.maxIterations ?? params.maxIterations),
		cost: typeof p.cost === 'number' ? p.cost : null,
		coverage: typeof p.coverage === 'number' ? p.coverage : null,
		history: Array.isArray(p.history) ? p.history : []
	};
}

async function runView(db: Db, job: JobRow): Promise<RunView> {
	const payload = job.payload as ProposalRunPayload;
	const view: RunView = {
		id: Number(job.id),
		proposalId: payload.proposalId,
		strategy: payload.params.strategy,
		state: job.state,
		progress: progressOf(job, payload.params),
		createdAt: new Date(job.created_at).toISOString()
	};
	if (job.state === 'finished') {
		const rev = await findRevisionByJob(db, Number(job.id));
		if (rev) view.revisionId = rev.id;
	}
	if (job.error && (job.state === 'failed' || job.state === 'cancelled')) view.error = job.error;
	return view;
}

async function runJob(db: Db, networkId: number, runId: number): Promise<JobRow> {
	const job = await getJob(db, runId, { networkId });
	if (!job || job.kind !== PROPOSAL_RUN) throw new ServiceError(404, 'not_found', 'No such run.');
	return job;
}

export async function getRunView(db: Db, networkId: number, runId: number): Promise<RunView> {
	return runView(db, await runJob(db, networkId, runId));
}

/** The runs of a proposal, newest first (limited to the latest 50). */
export async function listRunViews(db: Db, networkId: number, proposalId: number): Promise<RunView[]> {
	await getProposal(db, networkId, proposalId);
	const jobs = await listJobs(db, { networkId, kinds: [PROPOSAL_RUN], limit: 200 });
	const mine = jobs.filter((j) => (j.payload as ProposalRunPayload).proposalId === proposalId).slice(0, 50);
	return Promise.all(mine.map((j) => runView(db, j)));
}

/** Cancels a queued or running run; a run that already ended is left as it is. */
export async function cancelRun(db: Knex, network: NetworkRef, actorId: number, runId: number): Promise<RunView> {
	await runJob(db, network.id, runId);
	const job = await cancelJob(db, runId, { networkId: network.id });
	if (!job) throw new ServiceError(404, 'not_found', 'No such run.');
	await recordAudit(db, { organisationId: network.organisation_id, actorUserId: actorId, action: 'run.cancel', objectType: 'job', objectId: runId });
	return runView(db, job);
}

/**
 * A run done at once on the calling thread, its revision stored: for the demo seed and tests,
 * which need the outcome before they go on. The app queues runs instead (queueRuns).
 */
export async function runNow(db: Knex, store: ObjectStore, network: NetworkRef, actorId: number, proposalId: number, raw: unknown): Promise<number> {
	const params = parseParams(raw);
	await getProposal(db, network.id, proposalId);
	await checkParams(db, network.id, params);
	const prep = await preparePlacement(db, store, network.id, params);
	const snapshot = revisionSnapshot(prep, await executePlacement(prep, directRunner));
	return db.transaction((trx) => createRevisionFromResult(trx, { proposalId, networkId: network.id, organisationId: network.organisation_id, authorId: actorId, jobId: null }, snapshot));
}
