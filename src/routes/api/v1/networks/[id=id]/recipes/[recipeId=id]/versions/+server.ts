import { json } from '@sveltejs/kit';
import { z } from 'zod';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, readJson } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { getRecipeView } from '$lib/server/services/importance';
import { queueRecipeVersion } from '$lib/server/services/recipe-versions';

const input = z.object({ definition: z.unknown(), note: z.string().max(500, 'Keep the note under 500 characters.').optional() }).strict();

/** GET /api/v1/networks/:id/recipes/:recipeId/versions (newest first) */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'layer.view');
	return json({ versions: (await getRecipeView(getDb(), network.id, Number(event.params.recipeId))).versions });
});

/** POST /api/v1/networks/:id/recipes/:recipeId/versions {definition, note} → 202 {job}: the next version, saved by the job (result {version}). */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'recipe.edit');
	const body = await readJson(event, input);
	const job = await queueRecipeVersion(getDb(), network.id, network.organisation_id, actor.id, { recipeId: Number(event.params.recipeId), definition: body.definition, note: body.note });
	return json({ job }, { status: 202 });
});
