import { json } from '@sveltejs/kit';
import { z } from 'zod';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, readJson } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { useRecipeVersion } from '$lib/server/services/importance';
import { networkRecipeVersionId } from '$lib/server/repositories/recipes';

const input = z.object({ versionId: z.number({ error: 'versionId must be a number' }).int().positive('versionId must be a positive id') }).strict();

/** GET /api/v1/networks/:id/recipes/current: {versionId} the network works with (or null). */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'layer.view');
	return json({ versionId: await networkRecipeVersionId(getDb(), network.id) });
});

/** POST /api/v1/networks/:id/recipes/current {versionId}: use this version for the network. */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'recipe.edit');
	const { versionId } = await readJson(event, input);
	await useRecipeVersion(getDb(), network.id, network.organisation_id, actor.id, versionId);
	return json({ versionId });
});
