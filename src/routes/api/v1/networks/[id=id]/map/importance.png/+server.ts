import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { getObjectStore } from '$lib/server/storage/app-store';
import { apiHandler, ApiError } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { importancePng } from '$lib/server/services/map-data';
import { importanceSource } from '../importance-source';

/** GET /api/v1/networks/:id/map/importance.png: the importance surface coloured with the moorland ramp; 409 importance_pending while its map-importance job draws it (queued by this request if needed). */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'network.view');
	const png = await importancePng(getDb(), network, importanceSource(), getObjectStore());
	if (!png) throw new ApiError(404, 'not_found', 'This network has no importance map yet.');
	return new Response(new Uint8Array(png), { headers: { 'content-type': 'image/png', 'cache-control': 'private, no-store' } });
});
