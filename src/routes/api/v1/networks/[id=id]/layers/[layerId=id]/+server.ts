import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { getObjectStore } from '$lib/server/storage/app-store';
import { deleteLayer, getLayer, layerView } from '$lib/server/services/layers';

/** GET /api/v1/networks/:id/layers/:layerId (status, metadata, statistics) */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'layer.view');
	return json({ layer: layerView(await getLayer(getDb(), network.id, Number(event.params.layerId))) });
});

/** DELETE /api/v1/networks/:id/layers/:layerId; 409 while a recipe version cites it. */
export const DELETE: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'layer.edit');
	await deleteLayer(getDb(), getObjectStore(), { networkId: network.id, organisationId: network.organisation_id, actorId: actor.id }, Number(event.params.layerId));
	return new Response(null, { status: 204 });
});
