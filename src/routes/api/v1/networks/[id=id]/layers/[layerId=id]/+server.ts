import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, ApiError } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { getObjectStore } from '$lib/server/storage/app-store';
import { deleteLayer, getLayer, layerView } from '$lib/server/services/layers';
import { ServiceError } from '$lib/server/services/errors';

function apiFailure(err: unknown): never {
	if (err instanceof ServiceError) throw new ApiError(err.status, err.code, err.message, err.field ? { [err.field]: err.message } : undefined);
	throw err;
}

/** GET /api/v1/networks/:id/layers/:layerId (status, metadata, statistics) */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'layer.view');
	try {
		return json({ layer: layerView(await getLayer(getDb(), network.id, Number((event.params as Record<string, string>).layerId))) });
	} catch (err) {
		apiFailure(err);
	}
});

/** DELETE /api/v1/networks/:id/layers/:layerId; 409 while a recipe version cites it. */
export const DELETE: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'layer.edit');
	try {
		await deleteLayer(getDb(), getObjectStore(), { networkId: network.id, organisationId: network.organisation_id, actorId: actor.id }, Number((event.params as Record<string, string>).layerId));
		return new Response(null, { status: 204 });
	} catch (err) {
		apiFailure(err);
	}
});
