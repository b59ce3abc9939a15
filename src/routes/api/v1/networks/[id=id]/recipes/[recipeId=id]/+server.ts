import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { getObjectStore } from '$lib/server/storage/app-store';
import { deleteRecipe, getRecipeView } from '$lib/server/services/importance';

/** GET /api/v1/networks/:id/recipes/:recipeId: the recipe and its versions, newest first. */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'layer.view');
	return json({ recipe: await getRecipeView(getDb(), network.id, Number(event.params.recipeId)) });
});

/** DELETE /api/v1/networks/:id/recipes/:recipeId; 409 while the network uses one of its versions. */
export const DELETE: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'recipe.edit');
	await deleteRecipe(getDb(), getObjectStore(), network.id, network.organisation_id, actor.id, Number(event.params.recipeId));
	return new Response(null, { status: 204 });
});
