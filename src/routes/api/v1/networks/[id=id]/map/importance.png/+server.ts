import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { getObjectStore } from '$lib/server/storage/app-store';
import { apiHandler, ApiError } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { importancePng } from '$lib/server/services/map-data';
import { importanceSource } from '../importance-source';
import { imageEpsgParam } from '$lib/server/http/image-epsg';

/**
 * GET /api/v1/networks/:id/map/importance.png[?epsg=3857]: the importance surface coloured with the
 * moorland ramp, in the working CRS (server-drawn maps) or EPSG:3857 (the web map); 409
 * importance_pending while its map-importance job draws it (queued by this request if needed).
 */
export const GET: RequestHandler = apiHandler(async (event) => {
	const epsg = imageEpsgParam(event.url);
	const { network } = await networkAccess(event, 'network.view');
	const png = await importancePng(getDb(), network, importanceSource(), getObjectStore(), epsg);
	if (!png) throw new ApiError(404, 'not_found', 'This network has no importance map yet.');
	return new Response(new Uint8Array(png), { headers: { 'content-type': 'image/png', 'cache-control': 'private, no-store' } });
});
