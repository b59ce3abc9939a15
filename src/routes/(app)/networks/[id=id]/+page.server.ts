import { error, fail } from '@sveltejs/kit';
import type { Actions, PageServerLoad, RequestEvent } from './$types';
import { getDb } from '$lib/server/db';
import { requirePermission } from '$lib/server/auth/guard';
import { roleAllows } from '$lib/server/auth/roles';
import { formFields, parseForm, serviceFailure } from '$lib/server/forms';
import { findNetwork } from '$lib/server/repositories/networks';
import { networkPatch, publicView, updateNetworkDetails } from '$lib/server/services/networks';
import { roleIn } from '$lib/server/auth/actor';

/** Loads the network and checks that the actor may see it (404 when it is in another organisation). */
async function visibleNetwork(event: RequestEvent) {
	const network = await findNetwork(getDb(), Number(event.params.id));
	if (!network || (event.locals.actor && !roleIn(event.locals.actor, network.organisation_id))) error(404, 'No such network.');
	return network;
}

export const load = (async (event) => {
	const network = await visibleNetwork(event);
	const { role } = requirePermission(event, 'network.view', network.organisation_id);
	return {
		network: publicView(network),
		role,
		canEdit: roleAllows(role, 'network.edit'),
		canPublish: roleAllows(role, 'network.publish')
	};
}) satisfies PageServerLoad;

export const actions = {
	update: async (event) => {
		const network = await visibleNetwork(event);
		const { actor, role } = requirePermission(event, 'network.edit', network.organisation_id);
		const values = formFields(await event.request.formData(), ['name', 'description', 'crsEpsg', 'publicText', 'version']);
		const input: Record<string, unknown> = { ...values, crsEpsg: values.crsEpsg ? values.crsEpsg : null };
		const parsed = parseForm(networkPatch, input as Record<string, string>, ['name', 'description', 'crsEpsg', 'publicText']);
		if (!parsed.ok) return parsed.failure;
		try {
			await updateNetworkDetails(getDb(), network.id, actor.id, parsed.data, { mayPublish: roleAllows(role, 'network.publish') });
		} catch (err) {
			return serviceFailure(err, values);
		}
		return { saved: true };
	},
	publication: async (event) => {
		const network = await visibleNetwork(event);
		const { actor } = requirePermission(event, 'network.publish', network.organisation_id);
		const data = await event.request.formData();
		const parsed = networkPatch.safeParse({ publication: data.get('publication'), version: data.get('version') });
		if (!parsed.success) return fail(400, { errors: { publication: 'Choose public or private.' } });
		try {
			await updateNetworkDetails(getDb(), network.id, actor.id, parsed.data, { mayPublish: true });
		} catch (err) {
			return serviceFailure(err);
		}
		return { saved: true };
	}
} satisfies Actions;
