import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, readJson, ApiError } from '$lib/server/api/errors';
import { organisationsWith, requireActor, requirePermission } from '$lib/server/auth/guard';
import { findNetwork } from '$lib/server/repositories/networks';
import { createNetwork, networkInput, networkPage, publicView } from '$lib/server/services/networks';
import { z } from 'zod';

/**
 * GET /api/v1/networks?page=&perPage=: the networks the caller may see, a page at a time (perPage
 * 10, 25, 50 or 100; default 50), without geometry: `{ networks, total, page, pages, perPage }`.
 */
export const GET: RequestHandler = apiHandler(async (event) => {
	const actor = requireActor(event);
	return json(await networkPage(getDb(), organisationsWith(actor, 'network.view'), event.url.searchParams));
});

const createBody = networkInput.extend({ organisationId: z.number().int().positive().optional() });

/** POST /api/v1/networks: create a network (administrators). */
export const POST: RequestHandler = apiHandler(async (event) => {
	const actor = requireActor(event);
	// Permission first: a caller who may not create networks learns nothing from validation.
	if (organisationsWith(actor, 'network.create').length === 0) throw new ApiError(403, 'forbidden', 'You cannot create networks.');
	const body = await readJson(event, createBody);
	const organisationId = body.organisationId ?? organisationsWith(actor, 'network.create')[0];
	requirePermission(event, 'network.create', organisationId);
	const id = await createNetwork(getDb(), organisationId, actor.id, body);
	return json({ network: publicView((await findNetwork(getDb(), id))!) }, { status: 201 });
});
