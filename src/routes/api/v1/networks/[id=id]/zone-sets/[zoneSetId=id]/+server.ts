import { json } from '@sveltejs/kit';
import { z } from 'zod';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, readJson } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { removeZoneSet, useZoneSet, zoneSetView } from '$lib/server/services/zones';

/** GET /api/v1/networks/:id/zone-sets/:zoneSetId (zones with geometry, shares and sensor counts) */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'layer.view');
	return json({ zoneSet: await zoneSetView(getDb(), network, Number(event.params.zoneSetId)) });
});

/** POST /api/v1/networks/:id/zone-sets/:zoneSetId {inUse: true|false}: make it the network's zone set, or stop using it. */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'zone.edit');
	const { inUse } = await readJson(event, z.object({ inUse: z.boolean({ error: 'inUse must be true or false' }) }).strict());
	const id = Number(event.params.zoneSetId);
	const current = await zoneSetView(getDb(), network, id);
	if (inUse) await useZoneSet(getDb(), network, actor.id, id);
	else if (current.inUse) await useZoneSet(getDb(), network, actor.id, null);
	return json({ zoneSet: await zoneSetView(getDb(), network, id) });
});

/** DELETE /api/v1/networks/:id/zone-sets/:zoneSetId */
export const DELETE: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'zone.edit');
	await removeZoneSet(getDb(), network, actor.id, Number(event.params.zoneSetId));
	return new Response(null, { status: 204 });
});
