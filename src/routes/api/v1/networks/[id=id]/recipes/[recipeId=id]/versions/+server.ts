import { json } from '@sveltejs/kit';
import { z } from 'zod';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, ApiError, readJson } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { getRecipeView } from '$lib/server/services/importance';
import { queueRecipeVersion } from '$lib/server/services/recipe-versions';
import { ServiceError } from '$lib/server/services/errors';

function apiFailure(err: unknown): never {
	if (err instanceof ServiceError) throw new ApiError(err.status, err.code, err.message, err.field ? { [err.field]: err.message } : undefined);
	throw err;
}

const input = z.object({ definition: z.unknown(), note: z.string().max(500, 'Keep the note under 500 characters.').optional() }).strict();

/** GET /api/v1/networks/:id/recipes/:recipeId/versions (newest first) */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'layer.view');
	try {
		return json({ versions: (await getRecipeView(getDb(), network.id, Number((event.params as Record<string, string>).recipeId))).versions });
	} catch (err) {
		apiFailure(err);
	}
});

/** POST /api/v1/networks/:id/recipes/:recipeId/versions {definition, note} → 202 {job}: the next version, saved by the job (result {version}). */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'recipe.edit');
	const body = await readJson(event, input);
	try {
		const job = await queueRecipeVersion(getDb(), network.id, network.organisation_id, actor.id, { recipeId: Number((event.params as Record<string, string>).recipeId), definition: body.definition, note: body.note });
		return json({ job }, { status: 202 });
	} catch (err) {
		apiFailure(err);
	}
});
