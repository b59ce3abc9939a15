import { env } from '$env/dynamic/private';
import type { PageServerLoad } from './$types';
import { networkAccess } from '$lib/server/auth/network-access';
import { roleAllows } from '$lib/server/auth/roles';
import { layerLimits } from '$lib/server/services/layers';
import { createApiClient } from '$lib/api/client';

export const load = (async (event) => {
	const { network, role } = await networkAccess(event, 'layer.view');
	const layers = await createApiClient(event.fetch).listLayers(network.id);
	return { networkId: network.id, layers, canEdit: roleAllows(role, 'layer.edit'), maxBytes: layerLimits(env).maxBytes };
}) satisfies PageServerLoad;
