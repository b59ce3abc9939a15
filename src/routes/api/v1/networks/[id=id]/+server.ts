import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, readJson } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { roleAllows } from '$lib/server/auth/roles';
import { networkPatch, publicView, updateNetworkDetails } from '$lib/server/services/networks';

/** GET /api/v1/networks/:id */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'network.view');
	return json({ network: publicView(network) });
});

/** POST /api/v1/networks/:id: update fields; `version` must be the one last read. */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor, role } = await networkAccess(event, 'network.edit');
	const patch = await readJson(event, networkPatch.strict());
	const after = await updateNetworkDetails(getDb(), network.id, actor.id, patch, { mayPublish: roleAllows(role, 'network.publish') });
	return json({ network: publicView(after) });
});
