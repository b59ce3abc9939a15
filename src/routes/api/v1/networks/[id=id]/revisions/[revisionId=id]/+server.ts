import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { getRevisionView } from '$lib/server/services/proposals';

/** GET /api/v1/networks/:id/revisions/:revisionId → {id, proposalId, state, strategy, metrics, targets, moves, history, …} */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'proposal.view');
	return json(await getRevisionView(getDb(), network.id, Number(event.params.revisionId)));
});
