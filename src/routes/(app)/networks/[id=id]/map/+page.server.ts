import type { PageServerLoad } from './$types';
import { networkAccess } from '$lib/server/auth/network-access';

export const load = (async (event) => {
	const { network } = await networkAccess(event, 'network.view');
	return { networkId: network.id, networkName: network.name };
}) satisfies PageServerLoad;
