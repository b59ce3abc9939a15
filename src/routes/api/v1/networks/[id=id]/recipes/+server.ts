import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, readJson } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { listRecipeViews, saveVersionInput } from '$lib/server/services/importance';
import { queueRecipeVersion } from '$lib/server/services/recipe-versions';

/** GET /api/v1/networks/:id/recipes: recipes with their versions, and the network's current version. */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'layer.view');
	return json(await listRecipeViews(getDb(), network.id));
});

/**
 * POST /api/v1/networks/:id/recipes {name | recipeId, definition, note} → 202 {job}: a new
 * immutable version, saved by the job with its importance surface; the job's result is {version}.
 */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'recipe.edit');
	const input = await readJson(event, saveVersionInput);
	return json({ job: await queueRecipeVersion(getDb(), network.id, network.organisation_id, actor.id, input) }, { status: 202 });
});
