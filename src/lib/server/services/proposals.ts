/**
 * Proposals and their revisions: create a proposal, list them with their state and latest
 * figures, store a finished run as a new revision (createRevisionFromResult), and the views the
 * pages and the API show. A revision is written once; its state changes in ./reviews.
 */
import type { Knex } from 'knex';
import { z } from 'zod';
import type { Db } from '../db';
import { recordAudit } from '../repositories/audit';
import {
	findProposal,
	findRevision,
	findRevisionByJob,
	insertProposal,
	insertRevision,
	listProposals,
	listRevisionSummaries,
	reviewsOf,
	setChoiceNote,
	type ProposalRow,
	type ReviewRow,
	type RevisionRow,
	type RevisionState
} from '../repositories/proposals';
import type { RevisionInputs, RevisionMetrics, RevisionOutputs, RevisionSnapshot, RunInput } from './placement';
import { ServiceError } from './errors';

export const proposalInput = z
	.object({
		title: z.string({ error: 'Give the proposal a title.' }).trim().min(1, 'Give the proposal a title.').max(200, 'Keep the title under 200 characters.'),
		description: z.string().trim().max(5000, 'Keep the description under 5000 characters.').default('')
	})
	.strict();

function invalid(err: z.ZodError): never {
	throw ServiceError.fromZod(err);
}

export async function createProposal(db: Knex, network: { id: number; organisation_id: number }, actorId: number, raw: unknown): Promise<number> {
	const parsed = proposalInput.safeParse(raw);
	if (!parsed.success) invalid(parsed.error);
	return db.transaction(async (trx) => {
		const id = await insertProposal(trx, { network_id: network.id, title: parsed.data.title, description: parsed.data.description, author_id: actorId });
		await recordAudit(trx, { organisationId: network.organisation_id, actorUserId: actorId, action: 'proposal.create', objectType: 'proposal', objectId: id, after: parsed.data });
		return id;
	});
}

export async function getProposal(db: Db, networkId: number, proposalId: number): Promise<ProposalRow> {
	const p = await findProposal(db, networkId, proposalId);
	if (!p) throw new ServiceError(404, 'not_found', 'No such proposal.');
	return p;
}

/** The analyst's reasons for the revision they chose, written on the comparison page. */
export async function saveChoiceNote(db: Knex, network: { id: number; organisation_id: number }, actorId: number, proposalId: number, note: string): Promise<void> {
	const text = note.trim();
	if (text.length > 5000) throw new ServiceError(400, 'invalid_input', 'Keep the note under 5000 characters.', 'note');
	await db.transaction(async (trx) => {
		const p = await getProposal(trx, network.id, proposalId);
		await setChoiceNote(trx, p.id, text);
		await recordAudit(trx, { organisationId: network.organisation_id, actorUserId: actorId, action: 'proposal.choice_note', objectType: 'proposal', objectId: p.id, before: { note: p.choice_note }, after: { note: text } });
	});
}

// ---------------------------------------------------------------- revisions

export interface RevisionRun {
	proposalId: number;
	networkId: number;
	organisationId: number;
	authorId: number | null;
	jobId: number | null;
}

/**
 * Stores a finished run as the next revision of its proposal, inside the caller's transaction,
 * with its audit entry. A job that finishes twice (retried after a lost lease) makes one revision:
 * the second call returns the first one's id.
 */
export async function createRevisionFromResult(trx: Knex.Transaction, run: RevisionRun, s: RevisionSnapshot): Promise<number> {
	if (run.jobId !== null) {
		const done = await findRevisionByJob(trx, run.jobId);
		if (done) return done.id;
	}
	const proposal = await findProposal(trx, run.networkId, run.proposalId);
	if (!proposal) throw new ServiceError(404, 'not_found', 'The proposal of this run no longer exists.');
	const id = await insertRevision(trx, {
		proposal_id: run.proposalId,
		network_id: run.networkId,
		strategy: s.strategy,
		author_id: run.authorId,
		job_id: run.jobId,
		engine_version: s.engineVersion,
		inputs: s.inputs,
		parameters: s.parameters,
		outputs: s.outputs,
		metrics: s.metrics,
		content_hash: s.contentHash
	});
	await recordAudit(trx, {
		organisationId: run.organisationId,
		actorUserId: run.authorId,
		action: 'revision.create',
		objectType: 'revision',
		objectId: id,
		after: { proposalId: run.proposalId, strategy: s.strategy, contentHash: s.contentHash, cost: s.metrics.cost, coverage: s.metrics.coverage }
	});
	return id;
}

export interface ReviewView {
	decision: 'approve' | 'reject';
	comment: string;
	reviewer: string | null;
	at: string;
}

const reviewView = (r: ReviewRow): ReviewView => ({ decision: r.decision, comment: r.comment, reviewer: r.reviewer_name, at: r.created_at.toISOString() });

export interface RevisionSummaryView {
	id: number;
	proposalId: number;
	number: number;
	state: RevisionState;
	strategy: RevisionRow['strategy'];
	author: { id: number | null; name: string | null };
	engineVersion: string;
	contentHash: string;
	createdAt: string;
	submittedAt: string | null;
	decidedAt: string | null;
	metrics: RevisionMetrics;
	review: ReviewView | null;
}

export interface RevisionView extends RevisionSummaryView {
	targets: RevisionOutputs['targets'];
	/** Every movable current sensor with its site (minimum total travel). */
	moves: RevisionOutputs['moves']['assignment'];
	route: RevisionOutputs['moves']['route'];
	installations: string[];
	removals: string[];
	history: RevisionOutputs['history'];
	inputs: RevisionInputs;
	parameters: RunInput;
}

function summaryView(r: RevisionRow, review: ReviewRow | undefined): RevisionSummaryView {
	return {
		id: r.id,
		proposalId: r.proposal_id,
		number: r.number,
		state: r.state,
		strategy: r.strategy,
		author: { id: r.author_id, name: r.author_name },
		engineVersion: r.engine_version,
		contentHash: r.content_hash,
		createdAt: r.created_at.toISOString(),
		submittedAt: r.submitted_at ? r.submitted_at.toISOString() : null,
		decidedAt: r.decided_at ? r.decided_at.toISOString() : null,
		metrics: r.metrics as RevisionMetrics,
		review: review ? reviewView(review) : null
	};
}

export async function getRevisionView(db: Db, networkId: number, revisionId: number): Promise<RevisionView> {
	const r = await findRevision(db, networkId, revisionId);
	if (!r) throw new ServiceError(404, 'not_found', 'No such revision.');
	const [review] = await reviewsOf(db, [r.id]);
	const out = r.outputs as RevisionOutputs;
	return {
		...summaryView(r, review),
		targets: out.targets,
		moves: out.moves.assignment,
		route: out.moves.route,
		installations: out.moves.installations,
		removals: out.moves.removals,
		history: out.history,
		inputs: r.inputs as RevisionInputs,
		parameters: r.parameters as RunInput
	};
}

export interface ProposalView {
	id: number;
	title: string;
	description: string;
	author: { id: number | null; name: string | null };
	choiceNote: string;
	createdAt: string;
	/** The state of the proposal: that of its most advanced revision ('empty' with none). */
	state: RevisionState | 'empty';
	revisions: RevisionSummaryView[];
	latest: RevisionSummaryView | null;
}

const STATE_RANK: Record<RevisionState, number> = { draft: 0, rejected: 1, submitted: 2, superseded: 3, approved: 4 };

function proposalView(p: ProposalRow, revisions: RevisionSummaryView[]): ProposalView {
	const state = revisions.length === 0 ? 'empty' : revisions.reduce((best, r) => (STATE_RANK[r.state] > STATE_RANK[best] ? r.state : best), revisions[0].state);
	return {
		id: p.id,
		title: p.title,
		description: p.description,
		author: { id: p.author_id, name: p.author_name },
		choiceNote: p.choice_note,
		createdAt: p.created_at.toISOString(),
		state,
		revisions,
		latest: revisions.at(-1) ?? null
	};
}

async function summaries(db: Db, networkId: number, proposalIds?: number[]): Promise<RevisionSummaryView[]> {
	const rows = await listRevisionSummaries(db, networkId, proposalIds);
	const reviews = new Map((await reviewsOf(db, rows.map((r) => r.id))).map((v) => [v.revision_id, v]));
	return rows.map((r) => summaryView(r, reviews.get(r.id)));
}

export async function listProposalViews(db: Db, networkId: number): Promise<ProposalView[]> {
	const proposals = await listProposals(db, networkId);
	const revs = await summaries(db, networkId);
	return proposals.map((p) => proposalView(p, revs.filter((r) => r.proposalId === p.id)));
}

export async function getProposalView(db: Db, networkId: number, proposalId: number): Promise<ProposalView> {
	const p = await getProposal(db, networkId, proposalId);
	return proposalView(p, await summaries(db, networkId, [p.id]));
}
