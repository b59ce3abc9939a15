import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, ApiError } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { getObjectStore } from '$lib/server/storage/app-store';
import { deleteRecipe, getRecipeView } from '$lib/server/services/importance';
import { ServiceError } from '$lib/server/services/errors';

function apiFailure(err: unknown): never {
	if (err instanceof ServiceError) throw new ApiError(err.status, err.code, err.message, err.field ? { [err.field]: err.message } : undefined);
	throw err;
}

/** GET /api/v1/networks/:id/recipes/:recipeId: the recipe and its versions, newest first. */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'layer.view');
	try {
		return json({ recipe: await getRecipeView(getDb(), network.id, Number((event.params as Record<string, string>).recipeId)) });
	} catch (err) {
		apiFailure(err);
	}
});

/** DELETE /api/v1/networks/:id/recipes/:recipeId; 409 while the network uses one of its versions. */
export const DELETE: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'recipe.edit');
	try {
		await deleteRecipe(getDb(), getObjectStore(), network.id, network.organisation_id, actor.id, Number((event.params as Record<string, string>).recipeId));
		return new Response(null, { status: 204 });
	} catch (err) {
		apiFailure(err);
	}
});
