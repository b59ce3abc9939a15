import { error, fail } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { getDb } from '$lib/server/db';
import { networkAccess } from '$lib/server/auth/network-access';
import { roleAllows } from '$lib/server/auth/roles';
import { formFields, serviceFailure } from '$lib/server/forms';
import { appOrigin } from '$lib/server/mail/origin';
import { kickOutbox } from '$lib/server/mail/outbox';
import { getProposal, getRevisionView } from '$lib/server/services/proposals';
import { decideRevision, submitRevision } from '$lib/server/services/reviews';
import { ServiceError } from '$lib/server/services/errors';

export const load = (async (event) => {
	const { network, actor, role } = await networkAccess(event, 'proposal.view');
	const db = getDb();
	try {
		const proposal = await getProposal(db, network.id, Number(event.params.proposalId));
		const revision = await getRevisionView(db, network.id, Number(event.params.revisionId));
		if (revision.proposalId !== proposal.id) error(404, 'No such revision in this proposal.');
		const wrote = revision.author.id === actor.id;
		return {
			networkId: network.id,
			proposal: { id: proposal.id, title: proposal.title, choiceNote: proposal.choice_note },
			revision,
			canSubmit: roleAllows(role, 'proposal.edit') && revision.state === 'draft',
			canReview: roleAllows(role, 'revision.review') && revision.state === 'submitted' && !wrote,
			ownSubmitted: roleAllows(role, 'revision.review') && revision.state === 'submitted' && wrote
		};
	} catch (e) {
		if (e instanceof ServiceError && e.status === 404) error(404, e.message);
		throw e;
	}
}) satisfies PageServerLoad;

export const actions = {
	submit: async (event) => {
		const { network, actor } = await networkAccess(event, 'proposal.edit');
		const values = formFields(await event.request.formData(), ['note']);
		try {
			await submitRevision(getDb(), network, actor, Number(event.params.revisionId), { note: values.note ?? '' }, appOrigin());
		} catch (err) {
			return serviceFailure(err, values);
		}
		void kickOutbox().catch(() => undefined);
		return { done: 'Submitted: the reviewers have been told by e-mail.' };
	},
	review: async (event) => {
		const { network, actor } = await networkAccess(event, 'revision.review');
		const values = formFields(await event.request.formData(), ['decision', 'comment']);
		if (values.decision !== 'approve' && values.decision !== 'reject') return fail(400, { errors: { decision: 'Approve or reject.' }, values: { comment: values.comment ?? '' } });
		let outcome;
		try {
			outcome = await decideRevision(getDb(), network, actor, Number(event.params.revisionId), { decision: values.decision, comment: values.comment ?? '' }, appOrigin());
		} catch (err) {
			return serviceFailure(err, { comment: values.comment ?? '' });
		}
		void kickOutbox().catch(() => undefined);
		return { done: outcome.state === 'approved' ? 'Approved: this revision is now the network’s plan.' : 'Rejected: the author has been told by e-mail.' };
	}
} satisfies Actions;
