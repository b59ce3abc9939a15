import type { PageServerLoad } from './$types';
import { getDb } from '$lib/server/db';
import { networkAccess } from '$lib/server/auth/network-access';
import { roleAllows } from '$lib/server/auth/roles';
import { listLayerViews } from '$lib/server/services/layers';
import { listRecipeViews } from '$lib/server/services/importance';
import type { Layer, Recipe } from '$lib/api/client';
import { asApiJson } from '$lib/server/api/json-shape';

// From the services the API uses (GET …/layers, …/recipes), in its JSON shape (see asApiJson).
export const load = (async (event) => {
	const { network, role } = await networkAccess(event, 'layer.view');
	const db = getDb();
	const [layerViews, recipeViews] = await Promise.all([listLayerViews(db, network.id), listRecipeViews(db, network.id)]);
	const layers = asApiJson<Layer[]>(layerViews);
	const { recipes, currentVersionId } = asApiJson<{ recipes: Recipe[]; currentVersionId: number | null }>(recipeViews);
	return { networkId: network.id, layers: layers.filter((l) => l.status === 'ready'), recipes, currentVersionId, canEdit: roleAllows(role, 'recipe.edit') };
}) satisfies PageServerLoad;
