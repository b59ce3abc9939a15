import { json } from '@sveltejs/kit';
import { z } from 'zod';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, readJson } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { queueRecipePreview } from '$lib/server/services/recipe-previews';

const input = z.object({ definition: z.unknown() }).strict();

/**
 * POST /api/v1/networks/:id/recipes/preview {definition} → 202 {job}: the recipe is checked here
 * (400/422 at once) and its importance map computed by a job, whose result is
 * {preview: {png (base64, moorland ramp over 0..1), width, height, grid, figures, legend}}.
 * The same definition again answers the same job. No recipe is stored.
 */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'recipe.edit');
	const { definition } = await readJson(event, input);
	return json({ job: await queueRecipePreview(getDb(), network.id, actor.id, definition) }, { status: 202 });
});
