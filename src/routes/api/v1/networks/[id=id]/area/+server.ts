import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, readJson } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { areaPatch, areaView, normaliseAreaPatch, setArea } from '$lib/server/services/areas';

/** GET /api/v1/networks/:id/area: {version, studyArea: MultiPolygon | null, exclusions: Feature[]} */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'network.view');
	return json({ area: areaView(network) });
});

/**
 * POST /api/v1/networks/:id/area {version, studyArea?: GeoJSON geometry | Feature | FeatureCollection,
 * exclusions?: Feature[] (properties.name)}: replaces what is sent; `version` is the network's.
 */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'area.edit');
	const patch = await readJson(event, areaPatch);
	const after = await setArea(getDb(), network.id, actor.id, patch.version, normaliseAreaPatch(patch));
	return json({ area: areaView(after) });
});
