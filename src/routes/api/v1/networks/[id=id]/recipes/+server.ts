import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, readJson } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { getObjectStore } from '$lib/server/storage/app-store';
import { listRecipeViews, saveRecipeVersion, saveVersionInput } from '$lib/server/services/importance';

/** GET /api/v1/networks/:id/recipes: recipes with their versions, and the network's current version. */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'layer.view');
	return json(await listRecipeViews(getDb(), network.id));
});

/** POST /api/v1/networks/:id/recipes {name | recipeId, definition, note}: a new immutable version. */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'recipe.edit');
	const input = await readJson(event, saveVersionInput);
	const version = await saveRecipeVersion(getDb(), getObjectStore(), network.id, network.organisation_id, actor.id, input);
	return json({ version }, { status: 201 });
});
