import type { PageServerLoad } from './$types';
import { getDb } from '$lib/server/db';
import { networkAccess } from '$lib/server/auth/network-access';
import { roleAllows } from '$lib/server/auth/roles';
import { networkHistory } from '$lib/server/services/reviews';

export const load = (async (event) => {
	const { network, role } = await networkAccess(event, 'plan.view');
	const history = await networkHistory(getDb(), network);
	return { networkId: network.id, ...history, linkRevisions: roleAllows(role, 'proposal.view') };
}) satisfies PageServerLoad;
