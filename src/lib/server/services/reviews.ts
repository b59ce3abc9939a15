/**
 * Review of revisions and the network's plan.
 *
 *   submitRevision  draft → submitted; e-mails the organisation's reviewers (outbox, same transaction).
 *   decideRevision  submitted → approved | rejected, with a comment. Four eyes: nobody decides on a
 *                   revision they wrote or submitted, whatever their roles (403). One winner: the
 *                   state change is one conditional UPDATE … WHERE state = 'submitted'; of two
 *                   concurrent reviewers the second finds no row to change and gets 409, and nothing
 *                   else is written (the transaction stops before the review, plan and mail).
 *                   Approval makes the revision the network's plan; the earlier plan and its
 *                   revision become superseded. The author is e-mailed in the same transaction.
 *
 * Every decision goes in the audit log with who, when and why.
 */
import type { Knex } from 'knex';
import { z } from 'zod';
import type { Db } from '../db';
import { roleAllows, type Role } from '../auth/roles';
import { recordAudit } from '../repositories/audit';
import { enqueueMail } from '../repositories/outbox';
import {
	currentPlan,
	findProposal,
	findRevision,
	insertPlan,
	insertReview,
	planHistory,
	setSupersededBy,
	supersedePlan,
	transitionRevision,
	type PlanRow,
	type RevisionRow
} from '../repositories/proposals';
import { revisionDecidedMail, revisionSubmittedMail, type RevisionMailContext } from '../mail/templates';
import { ServiceError } from './errors';
import { createTasksForPlan } from './field-tasks';

export interface Reviewer {
	id: number;
	name: string;
}

interface NetworkRef {
	id: number;
	organisation_id: number;
	name: string;
}

export const submitInput = z.object({ note: z.string().trim().max(5000, 'Keep the note under 5000 characters.').default('') }).strict();
export const decisionInput = z
	.object({
		decision: z.enum(['approve', 'reject'], { error: 'Decide "approve" or "reject".' }),
		comment: z.string({ error: 'Write a comment.' }).trim().max(5000, 'Keep the comment under 5000 characters.')
	})
	.strict()
	.refine((v) => v.decision === 'approve' || v.comment.length > 0, { message: 'Say why you reject it.', path: ['comment'] });

function parseOr400<T>(schema: z.ZodType<T>, raw: unknown): T {
	const r = schema.safeParse(raw);
	if (r.success) return r.data;
	throw ServiceError.fromZod(r.error);
}

export function revisionUrl(origin: string, networkId: number, r: Pick<RevisionRow, 'proposal_id' | 'id'>): string {
	return `${origin.replace(/\/$/, '')}/networks/${networkId}/proposals/${r.proposal_id}/revisions/${r.id}`;
}

async function mailContext(db: Db, network: NetworkRef, r: RevisionRow, origin: string): Promise<RevisionMailContext> {
	const p = await findProposal(db, network.id, r.proposal_id);
	return { networkName: network.name, proposalTitle: p?.title ?? '', revisionNumber: r.number, strategy: r.strategy, url: revisionUrl(origin, network.id, r) };
}

const STATE_WORDS: Record<RevisionRow['state'], string> = {
	draft: 'is a draft: it has not been submitted',
	submitted: 'is waiting for review',
	approved: 'has already been approved',
	rejected: 'has already been rejected',
	superseded: 'has been superseded by a newer plan'
};

/** The people of an organisation who may review (holders of revision.review), with their addresses. */
async function reviewersOf(db: Db, organisationId: number): Promise<{ id: number; email: string }[]> {
	const rows = await db('memberships as m').join('users as u', 'u.id', 'm.user_id').select('u.id', 'u.email', 'm.role').where('m.organisation_id', organisationId);
	return rows.filter((r: { role: Role }) => roleAllows(r.role, 'revision.review')).map((r: { id: number; email: string }) => ({ id: r.id, email: r.email }));
}

/** draft → submitted, by an analyst of the network; the reviewers are e-mailed. */
export async function submitRevision(db: Knex, network: NetworkRef, actor: Reviewer, revisionId: number, raw: unknown, origin: string): Promise<void> {
	const { note } = parseOr400(submitInput, raw ?? {});
	await db.transaction(async (trx) => {
		const r = await findRevision(trx, network.id, revisionId);
		if (!r) throw new ServiceError(404, 'not_found', 'No such revision.');
		if (!(await transitionRevision(trx, r.id, 'draft', 'submitted', { submitted_by: actor.id }))) {
			const now = await findRevision(trx, network.id, revisionId);
			throw new ServiceError(409, 'not_draft', `Only a draft can be submitted; this revision ${STATE_WORDS[now!.state]}.`);
		}
		if (note) await trx('proposals').where({ id: r.proposal_id }).update({ choice_note: note, updated_at: trx.raw('CURRENT_TIMESTAMP(3)') });
		await recordAudit(trx, { organisationId: network.organisation_id, actorUserId: actor.id, action: 'revision.submit', objectType: 'revision', objectId: r.id, before: { state: 'draft' }, after: { state: 'submitted', note } });
		const ctx = await mailContext(trx, network, r, origin);
		for (const reviewer of await reviewersOf(trx, network.organisation_id)) {
			if (reviewer.id === actor.id || reviewer.id === r.author_id) continue;
			await enqueueMail(trx, revisionSubmittedMail(reviewer.email, ctx, actor.name, note));
		}
	});
}

/**
 * submitted → approved | rejected. Throws 403 four_eyes for the revision's author or submitter,
 * 409 not_submitted when it is not (or no longer) waiting for review.
 */
export async function decideRevision(db: Knex, network: NetworkRef, actor: Reviewer, revisionId: number, raw: unknown, origin: string): Promise<{ state: 'approved' | 'rejected'; planId: number | null }> {
	const { decision, comment } = parseOr400(decisionInput, raw);
	return db.transaction(async (trx) => {
		const r = await findRevision(trx, network.id, revisionId);
		if (!r) throw new ServiceError(404, 'not_found', 'No such revision.');
		if (r.author_id === actor.id || r.submitted_by === actor.id) {
			throw new ServiceError(403, 'four_eyes', 'You wrote or submitted this revision: another reviewer must decide on it (four eyes).');
		}
		const to = decision === 'approve' ? 'approved' : 'rejected';
		// The atomic step: only one caller finds the row still submitted.
		if (!(await transitionRevision(trx, r.id, 'submitted', to))) {
			const now = await findRevision(trx, network.id, revisionId);
			throw new ServiceError(409, 'not_submitted', `This revision ${STATE_WORDS[now!.state]}; nothing was changed.`);
		}
		await insertReview(trx, { revision_id: r.id, reviewer_id: actor.id, decision, comment });
		let planId: number | null = null;
		let superseded: PlanRow | undefined;
		if (decision === 'approve') {
			superseded = await currentPlan(trx, network.id, { forUpdate: true });
			if (superseded) {
				await supersedePlan(trx, superseded.id);
				await transitionRevision(trx, superseded.revision_id, 'approved', 'superseded');
			}
			planId = await insertPlan(trx, { network_id: network.id, revision_id: r.id, approved_by: actor.id });
			if (superseded) await setSupersededBy(trx, superseded.id, planId);
			// The plan's field work, in the same transaction (and the superseded plan's open tasks cancelled).
			await createTasksForPlan(trx, network, actor.id, planId, r, superseded?.id ?? null, origin);
		}
		await recordAudit(trx, {
			organisationId: network.organisation_id,
			actorUserId: actor.id,
			action: decision === 'approve' ? 'revision.approve' : 'revision.reject',
			objectType: 'revision',
			objectId: r.id,
			before: { state: 'submitted' },
			after: { state: to, comment, planId, supersededPlanId: superseded?.id ?? null }
		});
		if (superseded) {
			await recordAudit(trx, { organisationId: network.organisation_id, actorUserId: actor.id, action: 'plan.supersede', objectType: 'plan', objectId: superseded.id, before: { state: 'current', revisionId: superseded.revision_id }, after: { state: 'superseded', by: planId } });
		}
		const ctx = await mailContext(trx, network, r, origin);
		const recipients = new Set([r.author_id, r.submitted_by].filter((id): id is number => id !== null));
		for (const id of recipients) {
			const u = await trx('users').select('email').where({ id }).first();
			if (u) await enqueueMail(trx, revisionDecidedMail(u.email, ctx, actor.name, decision, comment));
		}
		return { state: to, planId };
	});
}

// ---------------------------------------------------------------- plan and history

export interface PlanView {
	id: number;
	revisionId: number;
	proposalId: number;
	proposalTitle: string;
	revisionNumber: number;
	strategy: string;
	state: 'current' | 'superseded';
	approvedAt: string;
	approvedBy: string | null;
	supersededAt: string | null;
	supersededBy: number | null;
}

export function planView(p: PlanRow): PlanView {
	return {
		id: p.id,
		revisionId: p.revision_id,
		proposalId: p.proposal_id,
		proposalTitle: p.proposal_title,
		revisionNumber: p.revision_number,
		strategy: p.strategy,
		state: p.state,
		approvedAt: p.approved_at.toISOString(),
		approvedBy: p.approved_by_name,
		supersededAt: p.superseded_at ? p.superseded_at.toISOString() : null,
		supersededBy: p.superseded_by
	};
}

export async function currentPlanView(db: Db, networkId: number): Promise<PlanView | null> {
	const p = await currentPlan(db, networkId);
	return p ? planView(p) : null;
}

export interface HistoryEvent {
	at: string;
	action: string;
	actor: string | null;
	revisionId: number | null;
	proposalId: number | null;
	summary: string;
	comment: string | null;
}

const ACTION_WORDS: Record<string, string> = {
	'proposal.create': 'opened the proposal',
	'revision.create': 'ran',
	'revision.submit': 'submitted',
	'revision.approve': 'approved',
	'revision.reject': 'rejected',
	'plan.supersede': 'superseded the plan of'
};

/** The network's plans (current first) and every proposal, run and decision, newest first. */
export async function networkHistory(db: Db, network: { id: number; organisation_id: number }, limit = 200): Promise<{ plans: PlanView[]; events: HistoryEvent[] }> {
	const plans = (await planHistory(db, network.id)).map(planView);
	type Rev = { id: number; number: number; strategy: string; proposal_id: number; title: string };
	const revisions: Rev[] = await db('revisions as r').join('proposals as p', 'p.id', 'r.proposal_id').select('r.id', 'r.number', 'r.strategy', 'p.id as proposal_id', 'p.title').where('r.network_id', network.id);
	const proposals: { id: number; title: string }[] = await db('proposals').select('id', 'title').where({ network_id: network.id });
	const revById = new Map(revisions.map((r) => [String(r.id), r]));
	const propById = new Map(proposals.map((p) => [String(p.id), p]));
	const planById = new Map(plans.map((p) => [String(p.id), p]));
	const rows = await db('audit_log as a')
		.leftJoin('users as u', 'u.id', 'a.actor_user_id')
		.select('a.action', 'a.object_type', 'a.object_id', 'a.after', 'a.created_at', 'u.name as actor')
		.where('a.organisation_id', network.organisation_id)
		.whereIn('a.action', Object.keys(ACTION_WORDS))
		.orderBy('a.id', 'desc')
		.limit(limit * 4);
	const events: HistoryEvent[] = [];
	for (const a of rows) {
		const after = typeof a.after === 'string' ? JSON.parse(a.after) : a.after;
		let rev: Rev | undefined;
		let proposal: { id: number; title: string } | undefined;
		if (a.object_type === 'revision') rev = revById.get(a.object_id);
		else if (a.object_type === 'proposal') proposal = propById.get(a.object_id);
		else if (a.object_type === 'plan') {
			const plan = planById.get(a.object_id);
			if (plan) rev = revById.get(String(plan.revisionId));
		}
		if (!rev && !proposal) continue; // another network's
		const what = rev ? `revision ${rev.number} (${rev.strategy}) of "${rev.title}"` : `"${proposal!.title}"`;
		events.push({
			at: new Date(a.created_at).toISOString(),
			action: a.action,
			actor: a.actor,
			revisionId: rev?.id ?? null,
			proposalId: rev?.proposal_id ?? proposal?.id ?? null,
			summary: `${ACTION_WORDS[a.action]} ${what}`,
			comment: typeof after?.comment === 'string' && after.comment ? after.comment : typeof after?.note === 'string' && after.note ? after.note : null
		});
		if (events.length >= limit) break;
	}
	return { plans, events };
}
