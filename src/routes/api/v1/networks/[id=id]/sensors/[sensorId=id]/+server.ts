import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, ApiError } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { findSensor } from '$lib/server/repositories/sensors';
import { editSensor, removeSensor, sensorView, validateSensorInput } from '$lib/server/services/sensors';
import { workingCrs } from '$lib/server/services/working-crs';

function version(v: unknown): number {
	const n = Number(v);
	if (!Number.isInteger(n) || n < 1) throw new ApiError(400, 'invalid_input', 'Some fields are not valid.', { version: 'version is required (the one last read).' });
	return n;
}

/** GET /api/v1/networks/:id/sensors/:sensorId */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'sensor.view');
	const s = await findSensor(getDb(), network.id, Number(event.params.sensorId));
	if (!s) throw new ApiError(404, 'not_found', 'No such sensor.');
	return json({ sensor: sensorView(s, await workingCrs(getDb(), network)) });
});

/** POST /api/v1/networks/:id/sensors/:sensorId: all fields of the sensor plus the `version` last read. */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'sensor.edit');
	let b: Record<string, unknown>;
	try {
		b = await event.request.json();
	} catch {
		throw new ApiError(400, 'invalid_json', 'The request body is not valid JSON.');
	}
	if (typeof b !== 'object' || b === null || Array.isArray(b)) throw new ApiError(400, 'invalid_input', 'Send a JSON object.');
	const v = version(b.version);
	const fields = Object.fromEntries(Object.entries(b).map(([k, x]) => [k, typeof x === 'number' ? String(x) : x === null ? '' : x]));
	const f = await validateSensorInput(getDb(), network, fields);
	const after = await editSensor(getDb(), network, actor.id, Number(event.params.sensorId), v, f);
	return json({ sensor: sensorView(after, await workingCrs(getDb(), network)) });
});

/** DELETE /api/v1/networks/:id/sensors/:sensorId?version=n */
export const DELETE: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'sensor.edit');
	await removeSensor(getDb(), network, actor.id, Number(event.params.sensorId), version(event.url.searchParams.get('version')));
	return new Response(null, { status: 204 });
});
