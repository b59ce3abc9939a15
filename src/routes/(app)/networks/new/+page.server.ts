import { redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { getDb } from '$lib/server/db';
import { currentOrganisation } from '$lib/server/auth/guard';
import { formFields, parseForm, serviceFailure } from '$lib/server/forms';
import { createNetwork, networkInput } from '$lib/server/services/networks';

export const load = (async (event) => {
	currentOrganisation(event, 'network.create');
	return {};
}) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		const { actor, organisationId } = currentOrganisation(event, 'network.create');
		const values = formFields(await event.request.formData(), ['name', 'description', 'crsEpsg', 'publicText']);
		if (values.crsEpsg === '') delete values.crsEpsg;
		const parsed = parseForm(networkInput, values, ['name', 'description', 'crsEpsg', 'publicText']);
		if (!parsed.ok) return parsed.failure;
		let id: number;
		try {
			id = await createNetwork(getDb(), organisationId, actor.id, parsed.data);
		} catch (err) {
			return serviceFailure(err, values);
		}
		redirect(303, `/networks/${id}`);
	}
} satisfies Actions;
