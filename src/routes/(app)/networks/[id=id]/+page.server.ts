import { fail } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { getDb } from '$lib/server/db';
import { networkAccess } from '$lib/server/auth/network-access';
import { roleAllows } from '$lib/server/auth/roles';
import { formFields, parseForm, serviceFailure } from '$lib/server/forms';
import { networkPatch, publicView, updateNetworkDetails } from '$lib/server/services/networks';
import { fieldSettings, updateFieldSettings } from '$lib/server/services/field-tasks';

export const load = (async (event) => {
	const { network, role } = await networkAccess(event, 'network.view');
	return {
		network: publicView(network),
		role,
		canEdit: roleAllows(role, 'network.edit'),
		canPublish: roleAllows(role, 'network.publish'),
		fieldSettings: await fieldSettings(getDb(), network.id)
	};
}) satisfies PageServerLoad;

export const actions = {
	update: async (event) => {
		const { network, actor, role } = await networkAccess(event, 'network.edit');
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
	fieldSettings: async (event) => {
		const { network, actor } = await networkAccess(event, 'network.edit');
		const values = formFields(await event.request.formData(), ['installToleranceM', 'publicGridM']);
		try {
			await updateFieldSettings(getDb(), network, actor.id, values);
		} catch (err) {
			return serviceFailure(err, values);
		}
		return { saved: true };
	},
	publication: async (event) => {
		const { network, actor } = await networkAccess(event, 'network.publish');
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
