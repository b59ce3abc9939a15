import type { PageServerLoad } from './$types';
import { networkAccess } from '$lib/server/auth/network-access';
import { roleAllows } from '$lib/server/auth/roles';

export const load = (async (event) => {
	const { network, role } = await networkAccess(event, 'network.view');
	// The page offers drawing the study area and exclusions only to roles the area API accepts.
	return { networkId: network.id, networkName: network.name, canEditArea: roleAllows(role, 'area.edit') };
}) satisfies PageServerLoad;
