import { redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { getDb } from '$lib/server/db';
import { networkAccess } from '$lib/server/auth/network-access';
import { roleAllows } from '$lib/server/auth/roles';
import { formFields, parseForm, serviceFailure } from '$lib/server/forms';
import { createProposal, listProposalViews, proposalInput } from '$lib/server/services/proposals';
import { currentPlanView } from '$lib/server/services/reviews';

export const load = (async (event) => {
	const { network, role } = await networkAccess(event, 'proposal.view');
	const db = getDb();
	return {
		networkId: network.id,
		proposals: await listProposalViews(db, network.id),
		plan: await currentPlanView(db, network.id),
		canEdit: roleAllows(role, 'proposal.edit')
	};
}) satisfies PageServerLoad;

export const actions = {
	create: async (event) => {
		const { network, actor } = await networkAccess(event, 'proposal.edit');
		const values = formFields(await event.request.formData(), ['title', 'description']);
		const parsed = parseForm(proposalInput, values, ['title', 'description']);
		if (!parsed.ok) return parsed.failure;
		let id: number;
		try {
			id = await createProposal(getDb(), network, actor.id, parsed.data);
		} catch (err) {
			return serviceFailure(err, values);
		}
		redirect(303, `/networks/${network.id}/proposals/${id}`);
	}
} satisfies Actions;
