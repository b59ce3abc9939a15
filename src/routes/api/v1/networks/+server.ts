import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, readJson, ApiError } from '$lib/server/api/errors';
import { organisationsWith, requireActor, requirePermission } from '$lib/server/auth/guard';
import { findNetwork, listNetworks } from '$lib/server/repositories/networks';
import { createNetwork, networkInput, publicView } from '$lib/server/services/networks';
import { z } from 'zod';

/** GET /api/v1/networks: the networks the caller may see. */
export const GET: RequestHandler = apiHandler(async (event) => {
	const actor = requireActor(event);
	const networks = await listNetworks(getDb(), organisationsWith(actor, 'network.view'));
	return json({ networks: networks.map(publicView) });
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
