import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, readJson } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { createSensorType, sensorTypeInput, sensorTypesOf } from '$lib/server/services/sensor-types';

/** GET /api/v1/networks/:id/sensor-types */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'sensor.view');
	return json({ sensorTypes: await sensorTypesOf(getDb(), network.id) });
});

/** POST /api/v1/networks/:id/sensor-types {name, radiusM, mobility, relocationMinutes?, notes?} */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'sensor.edit');
	const input = await readJson(event, sensorTypeInput.strict());
	const id = await createSensorType(getDb(), network.organisation_id, network.id, actor.id, input);
	const t = (await sensorTypesOf(getDb(), network.id)).find((x) => x.id === id)!;
	return json({ sensorType: t }, { status: 201 });
});
