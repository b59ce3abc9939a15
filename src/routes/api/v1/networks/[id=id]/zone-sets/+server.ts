import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, readJson } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { queueComputedZones, queueSharesOfNewZoneSet } from '$lib/server/services/zone-jobs';
import { createGridZoneSet, createUploadedZoneSet, zoneSetApiInput, zoneSetView, zoneSetViews } from '$lib/server/services/zones';

/** GET /api/v1/networks/:id/zone-sets (zones without geometry; ?geometry=1 to include it) */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'layer.view');
	return json({ zoneSets: await zoneSetViews(getDb(), network, { withGeometry: event.url.searchParams.get('geometry') === '1' }) });
});

/**
 * POST /api/v1/networks/:id/zone-sets
 *   {kind: 'uploaded', name?, geojson} | {kind: 'grid', name?, cellSizeKm} → 201 {zoneSet, job}: the
 *     set is stored without shares; `job` (null when the network has no importance yet) measures them
 *   {kind: 'computed', name?, k} → 202 {job}: the zones are computed by a job whose result is {zoneSetId}
 */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'zone.edit');
	const input = await readJson(event, zoneSetApiInput);
	const db = getDb();
	if (input.kind === 'computed') return json({ job: await queueComputedZones(db, network, actor.id, input.name, input.k) }, { status: 202 });
	const id =
		input.kind === 'uploaded'
			? await createUploadedZoneSet(db, network, actor.id, input.name, JSON.stringify(input.geojson), 'upload.geojson')
			: await createGridZoneSet(db, network, actor.id, input.name, input.cellSizeKm);
	const job = await queueSharesOfNewZoneSet(db, network, actor.id, id);
	return json({ zoneSet: await zoneSetView(db, network, id), job }, { status: 201 });
});
