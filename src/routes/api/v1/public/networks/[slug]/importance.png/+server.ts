import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { getObjectStore } from '$lib/server/storage/app-store';
import { apiHandler } from '$lib/server/api/errors';
import { publicImportancePng } from '$lib/server/services/public-map';
import { importanceSource } from '../../../../networks/[id=id]/map/importance-source';
import { imageEpsgParam } from '$lib/server/http/image-epsg';

/** GET /api/v1/public/networks/:slug/importance.png[?epsg=3857]: the public map's importance overlay, no sign-in. */
export const GET: RequestHandler = apiHandler(async (event) => {
	const epsg = imageEpsgParam(event.url);
	const png = await publicImportancePng(getDb(), event.params.slug ?? '', importanceSource(), getObjectStore(), epsg);
	return new Response(new Uint8Array(png), { headers: { 'content-type': 'image/png', 'cache-control': 'public, max-age=300' } });
});
