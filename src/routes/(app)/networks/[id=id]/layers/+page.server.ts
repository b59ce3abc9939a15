import { env } from '$env/dynamic/private';
import type { PageServerLoad } from './$types';
import { getDb } from '$lib/server/db';
import { networkAccess } from '$lib/server/auth/network-access';
import { roleAllows } from '$lib/server/auth/roles';
import { layerLimits, listLayerViews } from '$lib/server/services/layers';
import type { Layer } from '$lib/api/client';
import { asApiJson } from '$lib/server/api/json-shape';

// The layer list from the service the API uses (GET …/layers), in its JSON shape (see asApiJson).
export const load = (async (event) => {
	const { network, role } = await networkAccess(event, 'layer.view');
	const layers = asApiJson<Layer[]>(await listLayerViews(getDb(), network.id));
	return { networkId: network.id, layers, canEdit: roleAllows(role, 'layer.edit'), maxBytes: layerLimits(env).maxBytes };
}) satisfies PageServerLoad;
