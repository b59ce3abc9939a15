import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, ApiError, readJson } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { removeSensorType, sensorTypeInput, sensorTypesOf, updateSensorTypeDetails } from '$lib/server/services/sensor-types';

/** GET /api/v1/networks/:id/sensor-types/:typeId */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'sensor.view');
	const t = (await sensorTypesOf(getDb(), network.id)).find((x) => x.id === Number(event.params.typeId));
	if (!t) throw new ApiError(404, 'not_found', 'No such sensor type.');
	return json({ sensorType: t });
});

/** POST /api/v1/networks/:id/sensor-types/:typeId: replace the type's fields. */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'sensor.edit');
	const input = await readJson(event, sensorTypeInput.strict());
	await updateSensorTypeDetails(getDb(), network.organisation_id, network.id, actor.id, Number(event.params.typeId), input);
	return json({ sensorType: (await sensorTypesOf(getDb(), network.id)).find((x) => x.id === Number(event.params.typeId)) });
});

/** DELETE /api/v1/networks/:id/sensor-types/:typeId (refused while sensors use it). */
export const DELETE: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'sensor.edit');
	await removeSensorType(getDb(), network.organisation_id, network.id, actor.id, Number(event.params.typeId));
	return new Response(null, { status: 204 });
});
