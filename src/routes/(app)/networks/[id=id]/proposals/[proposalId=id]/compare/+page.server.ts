import { error, fail } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { getDb } from '$lib/server/db';
import { networkAccess } from '$lib/server/auth/network-access';
import { roleAllows } from '$lib/server/auth/roles';
import { formFields, serviceFailure } from '$lib/server/forms';
import { getProposal, getProposalView, getRevisionView, saveChoiceNote } from '$lib/server/services/proposals';
import { ServiceError } from '$lib/server/services/errors';

/** /compare?r=1&r=2&r=3: one to three revisions of the network beside the network as it stands. */
export const load = (async (event) => {
	const { network, role } = await networkAccess(event, 'proposal.view');
	const db = getDb();
	const ids = [...new Set(event.url.searchParams.getAll('r').flatMap((v) => v.split(',')).map(Number))].filter((n) => Number.isInteger(n) && n > 0);
	try {
		const proposal = await getProposalView(db, network.id, Number(event.params.proposalId));
		const chosen = ids.length ? ids : proposal.revisions.slice(-3).map((r) => r.id);
		if (chosen.length > 3) error(400, 'Compare at most three revisions at once.');
		const revisions = await Promise.all(chosen.map((id) => getRevisionView(db, network.id, id)));
		return {
			networkId: network.id,
			proposal: { id: proposal.id, title: proposal.title, choiceNote: proposal.choiceNote },
			others: proposal.revisions.map((r) => ({ id: r.id, number: r.number, strategy: r.strategy })),
			revisions,
			canEdit: roleAllows(role, 'proposal.edit')
		};
	} catch (e) {
		if (e instanceof ServiceError && e.status === 404) error(404, e.message);
		throw e;
	}
}) satisfies PageServerLoad;

export const actions = {
	note: async (event) => {
		const { network, actor } = await networkAccess(event, 'proposal.edit');
		const values = formFields(await event.request.formData(), ['note']);
		if (values.note === undefined) return fail(400, { errors: { note: 'Write why you chose a revision.' }, values: {} });
		try {
			await getProposal(getDb(), network.id, Number(event.params.proposalId));
			await saveChoiceNote(getDb(), network, actor.id, Number(event.params.proposalId), values.note);
		} catch (err) {
			return serviceFailure(err, values);
		}
		return { saved: 'Saved. It goes with the revision you submit.' };
	}
} satisfies Actions;
