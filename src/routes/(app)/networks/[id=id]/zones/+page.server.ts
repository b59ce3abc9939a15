import type { PageServerLoad } from './$types';
import { networkAccess } from '$lib/server/auth/network-access';

export const load = (async (event) => {
	await networkAccess(event, 'network.view');
	return {};
}) satisfies PageServerLoad;
