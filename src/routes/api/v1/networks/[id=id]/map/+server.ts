import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { getObjectStore } from '$lib/server/storage/app-store';
import { apiHandler } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { roleAllows } from '$lib/server/auth/roles';
import { networkMap } from '$lib/server/services/map-data';
import { importanceSource } from './importance-source';
import { WEB_MAP_EPSG } from '$lib/map/web-map';

/** GET /api/v1/networks/:id/map: everything the network map draws, in the working CRS; the importance image in EPSG:3857 for the web map. */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network, role } = await networkAccess(event, 'network.view');
	const map = await networkMap(getDb(), {
		network,
		importance: importanceSource(),
		cache: getObjectStore(),
		apiBase: `/api/v1/networks/${network.id}`,
		mayViewLayers: roleAllows(role, 'layer.view'),
		imageEpsg: WEB_MAP_EPSG
	});
	return json({ map }, { headers: { 'cache-control': 'private, no-store' } });
});
