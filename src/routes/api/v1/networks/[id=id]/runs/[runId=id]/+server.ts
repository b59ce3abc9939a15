import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { cancelRun, getRunView } from '$lib/server/services/runs';

/** GET /api/v1/networks/:id/runs/:runId → {id, state, progress: {iteration, cost, …}, revisionId?, error?} */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'proposal.view');
	return json(await getRunView(getDb(), network.id, Number(event.params.runId)));
});

/** DELETE /api/v1/networks/:id/runs/:runId cancels the run → the run as it is now */
export const DELETE: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'proposal.edit');
	return json(await cancelRun(getDb(), network, actor.id, Number(event.params.runId)));
});
