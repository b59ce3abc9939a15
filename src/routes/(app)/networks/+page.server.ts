import type { PageServerLoad } from './$types';
import { getDb } from '$lib/server/db';
import { organisationsWith, requireActor } from '$lib/server/auth/guard';
import { listNetworks } from '$lib/server/repositories/networks';

export const load = (async (event) => {
	const actor = requireActor(event);
	const orgs = organisationsWith(actor, 'network.view');
	const { rows: networks } = await listNetworks(getDb(), orgs, { limit: 1000, offset: 0 });
	const names = new Map(actor.memberships.map((m) => [m.organisation_id, m.organisation_name]));
	return {
		networks: networks.map((n) => ({ id: n.id, name: n.name, description: n.description, publication: n.publication, organisation: names.get(n.organisation_id) ?? '', updatedAt: n.updated_at })),
		canCreate: organisationsWith(actor, 'network.create').length > 0
	};
}) satisfies PageServerLoad;
