/**
 * Proposals, their revisions, the reviews of revisions and the plans of networks. A revision's
 * snapshot columns are written once by insertRevision; the only updates here touch its state
 * (and MariaDB's trigger refuses anything else, see the migration).
 */
import type { Db } from '../db';

export type RevisionState = 'draft' | 'submitted' | 'approved' | 'rejected' | 'superseded';
export type Decision = 'approve' | 'reject';

const parse = (v: unknown) => (typeof v === 'string' ? JSON.parse(v) : (v ?? null));

// ---------------------------------------------------------------- proposals

export interface ProposalRow {
	id: number;
	network_id: number;
	title: string;
	description: string;
	author_id: number | null;
	author_name: string | null;
	choice_note: string;
	created_at: Date;
	updated_at: Date;
}

const proposalQuery = (db: Db) =>
	db('proposals as p')
		.leftJoin('users as u', 'u.id', 'p.author_id')
		.select('p.id', 'p.network_id', 'p.title', 'p.description', 'p.author_id', 'u.name as author_name', 'p.choice_note', 'p.created_at', 'p.updated_at');

export async function listProposals(db: Db, networkId: number): Promise<ProposalRow[]> {
	return proposalQuery(db).where('p.network_id', networkId).orderBy('p.id', 'desc');
}

export async function findProposal(db: Db, networkId: number, id: number): Promise<ProposalRow | undefined> {
	return proposalQuery(db).where({ 'p.network_id': networkId, 'p.id': id }).first();
}

export async function insertProposal(db: Db, p: { network_id: number; title: string; description: string; author_id: number }): Promise<number> {
	const [id] = await db('proposals').insert({ ...p, choice_note: '' });
	return id;
}

export async function setChoiceNote(db: Db, id: number, note: string): Promise<void> {
	await db('proposals').where({ id }).update({ choice_note: note, updated_at: db.raw('CURRENT_TIMESTAMP(3)') });
}

// ---------------------------------------------------------------- revisions

export interface RevisionRow {
	id: number;
	proposal_id: number;
	network_id: number;
	number: number;
	strategy: 'lloyd' | 'range-limited' | 'zone-balanced';
	author_id: number | null;
	author_name: string | null;
	job_id: number | null;
	engine_version: string;
	inputs: unknown;
	parameters: unknown;
	outputs: unknown;
	metrics: unknown;
	content_hash: string;
	state: RevisionState;
	submitted_by: number | null;
	submitted_at: Date | null;
	decided_at: Date | null;
	created_at: Date;
}

/** Revision columns without the large snapshot parts (for lists). */
const summaryColumns = ['r.id', 'r.proposal_id', 'r.network_id', 'r.number', 'r.strategy', 'r.author_id', 'u.name as author_name', 'r.job_id', 'r.engine_version', 'r.metrics', 'r.content_hash', 'r.state', 'r.submitted_by', 'r.submitted_at', 'r.decided_at', 'r.created_at'];

function parseRevision(row: Record<string, unknown>): RevisionRow {
	return { ...(row as unknown as RevisionRow), inputs: parse(row.inputs), parameters: parse(row.parameters), outputs: parse(row.outputs), metrics: parse(row.metrics) };
}

export async function findRevision(db: Db, networkId: number, id: number): Promise<RevisionRow | undefined> {
	const row = await db('revisions as r')
		.leftJoin('users as u', 'u.id', 'r.author_id')
		.select(...summaryColumns, 'r.inputs', 'r.parameters', 'r.outputs')
		.where({ 'r.network_id': networkId, 'r.id': id })
		.first();
	return row ? parseRevision(row) : undefined;
}

export async function findRevisionByJob(db: Db, jobId: number): Promise<{ id: number } | undefined> {
	return db('revisions').select('id').where({ job_id: jobId }).first();
}

/** Revisions of some proposals (or of a whole network), without inputs and outputs. */
export async function listRevisionSummaries(db: Db, networkId: number, proposalIds?: number[]): Promise<RevisionRow[]> {
	const q = db('revisions as r').leftJoin('users as u', 'u.id', 'r.author_id').select(...summaryColumns).where('r.network_id', networkId);
	if (proposalIds) q.whereIn('r.proposal_id', proposalIds);
	const rows = await q.orderBy([{ column: 'r.proposal_id' }, { column: 'r.number' }]);
	return rows.map(parseRevision);
}

export type NewRevision = Pick<RevisionRow, 'proposal_id' | 'network_id' | 'strategy' | 'author_id' | 'job_id' | 'engine_version' | 'inputs' | 'parameters' | 'outputs' | 'metrics' | 'content_hash'>;

/** Inserts a revision with the next number of its proposal (the proposal row is locked for it). */
export async function insertRevision(db: Db, r: NewRevision): Promise<number> {
	await db('proposals').select('id').where({ id: r.proposal_id }).forUpdate().first();
	const last = await db('revisions').max({ n: 'number' }).where({ proposal_id: r.proposal_id }).first();
	const [id] = await db('revisions').insert({
		...r,
		number: Number(last?.n ?? 0) + 1,
		inputs: JSON.stringify(r.inputs),
		parameters: JSON.stringify(r.parameters),
		outputs: JSON.stringify(r.outputs),
		metrics: JSON.stringify(r.metrics)
	});
	return id;
}

/**
 * Moves a revision from one state to another; returns false when it was not in `from` any more.
 * The conditional UPDATE is the atomic step: of two concurrent callers only one changes the row.
 */
export async function transitionRevision(db: Db, id: number, from: RevisionState, to: RevisionState, extra: { submitted_by?: number } = {}): Promise<boolean> {
	const patch: Record<string, unknown> = { state: to };
	if (to === 'submitted') {
		patch.submitted_by = extra.submitted_by ?? null;
		patch.submitted_at = db.raw('CURRENT_TIMESTAMP(3)');
	}
	if (to === 'approved' || to === 'rejected') patch.decided_at = db.raw('CURRENT_TIMESTAMP(3)');
	const n = await db('revisions').where({ id, state: from }).update(patch);
	return n === 1;
}

// ---------------------------------------------------------------- reviews

export interface ReviewRow {
	id: number;
	revision_id: number;
	reviewer_id: number | null;
	reviewer_name: string | null;
	decision: Decision;
	comment: string;
	created_at: Date;
}

export async function insertReview(db: Db, r: { revision_id: number; reviewer_id: number; decision: Decision; comment: string }): Promise<number> {
	const [id] = await db('reviews').insert(r);
	return id;
}

export async function reviewsOf(db: Db, revisionIds: number[]): Promise<ReviewRow[]> {
	if (revisionIds.length === 0) return [];
	return db('reviews as v')
		.leftJoin('users as u', 'u.id', 'v.reviewer_id')
		.select('v.id', 'v.revision_id', 'v.reviewer_id', 'u.name as reviewer_name', 'v.decision', 'v.comment', 'v.created_at')
		.whereIn('v.revision_id', revisionIds)
		.orderBy('v.id');
}

// ---------------------------------------------------------------- plans

export interface PlanRow {
	id: number;
	network_id: number;
	revision_id: number;
	state: 'current' | 'superseded';
	approved_by: number | null;
	approved_by_name: string | null;
	approved_at: Date;
	superseded_at: Date | null;
	superseded_by: number | null;
	proposal_id: number;
	proposal_title: string;
	revision_number: number;
	strategy: RevisionRow['strategy'];
}

const planQuery = (db: Db) =>
	db('plans as pl')
		.join('revisions as r', 'r.id', 'pl.revision_id')
		.join('proposals as p', 'p.id', 'r.proposal_id')
		.leftJoin('users as u', 'u.id', 'pl.approved_by')
		.select(
			'pl.id',
			'pl.network_id',
			'pl.revision_id',
			'pl.state',
			'pl.approved_by',
			'u.name as approved_by_name',
			'pl.approved_at',
			'pl.superseded_at',
			'pl.superseded_by',
			'p.id as proposal_id',
			'p.title as proposal_title',
			'r.number as revision_number',
			'r.strategy'
		);

export async function currentPlan(db: Db, networkId: number, opts: { forUpdate?: boolean } = {}): Promise<PlanRow | undefined> {
	const q = planQuery(db).where({ 'pl.network_id': networkId, 'pl.state': 'current' }).first();
	return opts.forUpdate ? q.forUpdate() : q;
}

export async function planHistory(db: Db, networkId: number): Promise<PlanRow[]> {
	return planQuery(db).where('pl.network_id', networkId).orderBy('pl.id', 'desc');
}

/** Marks the current plan superseded (first, so that the new one can become current). */
export async function supersedePlan(db: Db, planId: number): Promise<void> {
	await db('plans').where({ id: planId, state: 'current' }).update({ state: 'superseded', superseded_at: db.raw('CURRENT_TIMESTAMP(3)') });
}

export async function setSupersededBy(db: Db, planId: number, byPlanId: number): Promise<void> {
	await db('plans').where({ id: planId }).update({ superseded_by: byPlanId });
}

export async function insertPlan(db: Db, p: { network_id: number; revision_id: number; approved_by: number }): Promise<number> {
	const [id] = await db('plans').insert({ ...p, state: 'current' });
	return id;
}
