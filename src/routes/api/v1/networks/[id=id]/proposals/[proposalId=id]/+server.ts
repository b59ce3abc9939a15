import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { getProposalView } from '$lib/server/services/proposals';

/** GET /api/v1/networks/:id/proposals/:proposalId → {proposal: {..., revisions: [...]}} */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'proposal.view');
	return json({ proposal: await getProposalView(getDb(), network.id, Number(event.params.proposalId)) });
});
