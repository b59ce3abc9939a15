import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, ApiError } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { getObjectStore } from '$lib/server/storage/app-store';
import { layerPreview } from '$lib/server/services/layers';
import { isObjectNotFound } from '$lib/server/storage/object-store';

/** GET /api/v1/networks/:id/layers/:layerId/preview.png (moorland ramp over the layer's min..max) */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'layer.view');
	try {
		const png = await layerPreview(getDb(), getObjectStore(), network.id, Number(event.params.layerId));
		return new Response(new Uint8Array(png), { headers: { 'content-type': 'image/png', 'cache-control': 'private, max-age=300' } });
	} catch (err) {
		if (isObjectNotFound(err)) throw new ApiError(404, 'not_found', 'The preview of this layer is missing.');
		throw err;
	}
});
