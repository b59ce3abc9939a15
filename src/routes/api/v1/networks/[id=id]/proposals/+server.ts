import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, readJson } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { createProposal, getProposalView, listProposalViews, proposalInput } from '$lib/server/services/proposals';

/** GET /api/v1/networks/:id/proposals → {proposals: [...]} with state and latest metrics */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'proposal.view');
	return json({ proposals: await listProposalViews(getDb(), network.id) });
});

/** POST /api/v1/networks/:id/proposals {title, description?} → 201 {id, …} */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'proposal.edit');
	const input = await readJson(event, proposalInput);
	const db = getDb();
	const id = await createProposal(db, network, actor.id, input);
	return json(await getProposalView(db, network.id, id), { status: 201 });
});
