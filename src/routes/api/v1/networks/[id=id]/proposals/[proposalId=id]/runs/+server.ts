import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, ApiError } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { ALL_STRATEGIES, listRunViews, queueRuns } from '$lib/server/services/runs';

/** GET /api/v1/networks/:id/proposals/:proposalId/runs → {runs: [...]} newest first */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'proposal.view');
	return json({ runs: await listRunViews(getDb(), network.id, Number(event.params.proposalId)) });
});

/**
 * POST /api/v1/networks/:id/proposals/:proposalId/runs
 *   {strategy, addCount?, addTypeId?, recipeVersionId?, zoneSetId?, sensorIds?, maxIterations?,
 *    tolerance?, minSpacing?, maxTravel?, cellSize?, seed?} → 202 {id, state}
 *   ?all=1 queues one run per strategy on the same inputs → 202 {runs: [{id, state}, …]}
 */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'proposal.edit');
	let body: unknown;
	try {
		body = await event.request.json();
	} catch {
		throw new ApiError(400, 'invalid_json', 'The request body is not valid JSON.');
	}
	const all = event.url.searchParams.get('all') === '1';
	// "Compare all three": the strategy comes from the list, whatever the body says.
	if (all && body && typeof body === 'object' && !Array.isArray(body)) body = { ...body, strategy: 'lloyd' };
	const runs = await queueRuns(getDb(), network, actor.id, Number(event.params.proposalId), body, all ? ALL_STRATEGIES : undefined);
	if (all) return json({ runs }, { status: 202 });
	return json(runs[0], { status: 202 });
});
