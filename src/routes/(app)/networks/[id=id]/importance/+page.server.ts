import type { PageServerLoad } from './$types';
import { networkAccess } from '$lib/server/auth/network-access';
import { roleAllows } from '$lib/server/auth/roles';
import { createApiClient } from '$lib/api/client';

export const load = (async (event) => {
	const { network, role } = await networkAccess(event, 'layer.view');
	const api = createApiClient(event.fetch);
	const [layers, { recipes, currentVersionId }] = await Promise.all([api.listLayers(network.id), api.listRecipes(network.id)]);
	return { networkId: network.id, layers: layers.filter((l) => l.status === 'ready'), recipes, currentVersionId, canEdit: roleAllows(role, 'recipe.edit') };
}) satisfies PageServerLoad;
