import { json, type RequestEvent } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, readJson, ApiError } from '$lib/server/api/errors';
import { requireActor, requirePermission } from '$lib/server/auth/guard';
import { roleIn } from '$lib/server/auth/actor';
import { roleAllows } from '$lib/server/auth/roles';
import { findNetwork } from '$lib/server/repositories/networks';
import { networkPatch, publicView, updateNetworkDetails } from '$lib/server/services/networks';
import { ServiceError } from '$lib/server/services/errors';

async function visible(event: RequestEvent) {
	const actor = requireActor(event);
	const network = await findNetwork(getDb(), Number(event.params.id));
	// Networks of other organisations are not found, rather than forbidden: their existence is not told.
	if (!network || !roleIn(actor, network.organisation_id)) throw new ApiError(404, 'not_found', 'No such network.');
	return network;
}

/** GET /api/v1/networks/:id */
export const GET: RequestHandler = apiHandler(async (event) => {
	const network = await visible(event);
	requirePermission(event, 'network.view', network.organisation_id);
	return json({ network: publicView(network) });
});

/** POST /api/v1/networks/:id: update fields; `version` must be the one last read. */
export const POST: RequestHandler = apiHandler(async (event) => {
	const network = await visible(event);
	const { actor, role } = requirePermission(event, 'network.edit', network.organisation_id);
	const patch = await readJson(event, networkPatch.strict());
	try {
		const after = await updateNetworkDetails(getDb(), network.id, actor.id, patch, { mayPublish: roleAllows(role, 'network.publish') });
		return json({ network: publicView(after) });
	} catch (err) {
		if (err instanceof ServiceError) throw new ApiError(err.status, err.code, err.message, err.field ? { [err.field]: err.message } : undefined);
		throw err;
	}
});
