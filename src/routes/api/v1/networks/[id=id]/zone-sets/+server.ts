import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, readJson } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { getObjectStore } from '$lib/server/storage/app-store';
import { queueComputedZones } from '$lib/server/services/zone-jobs';
import { createGridZoneSet, createUploadedZoneSet, importanceForZones, zoneSetApiInput, zoneSetView, zoneSetViews } from '$lib/server/services/zones';

/** GET /api/v1/networks/:id/zone-sets (zones without geometry; ?geometry=1 to include it) */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'layer.view');
	return json({ zoneSets: await zoneSetViews(getDb(), network, { withGeometry: event.url.searchParams.get('geometry') === '1' }) });
});

/**
 * POST /api/v1/networks/:id/zone-sets
 *   {kind: 'uploaded', name?, geojson} | {kind: 'grid', name?, cellSizeKm} → 201 {zoneSet}
 *   {kind: 'computed', name?, k} → 202 {job}: the zones are computed by a job whose result is {zoneSetId}
 */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'zone.edit');
	const input = await readJson(event, zoneSetApiInput);
	const db = getDb();
	if (input.kind === 'computed') return json({ job: await queueComputedZones(db, network, actor.id, input.name, input.k) }, { status: 202 });
	const importance = await importanceForZones(db, getObjectStore(), network);
	const id =
		input.kind === 'uploaded'
			? await createUploadedZoneSet(db, network, actor.id, input.name, JSON.stringify(input.geojson), 'upload.geojson', importance)
			: await createGridZoneSet(db, network, actor.id, input.name, input.cellSizeKm, importance);
	return json({ zoneSet: await zoneSetView(db, network, id) }, { status: 201 });
});
