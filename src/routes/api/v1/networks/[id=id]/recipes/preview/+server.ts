import { json } from '@sveltejs/kit';
import { z } from 'zod';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, readJson } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { getObjectStore } from '$lib/server/storage/app-store';
import { previewRecipe } from '$lib/server/services/importance';

const input = z.object({ definition: z.unknown() }).strict();

/**
 * POST /api/v1/networks/:id/recipes/preview {definition}: the importance map of an unsaved
 * recipe as a PNG (base64, moorland ramp over 0..1) with its grid and figures. Nothing is stored.
 */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'recipe.edit');
	const { definition } = await readJson(event, input);
	const p = await previewRecipe(getDb(), getObjectStore(), network.id, definition);
	return json({ preview: { png: p.png.toString('base64'), width: p.width, height: p.height, grid: p.grid, validCount: p.validCount, min: p.min, max: p.max, mean: p.mean, legend: p.legend } });
});
