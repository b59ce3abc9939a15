import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, ApiError } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { findSensor } from '$lib/server/repositories/sensors';
import { createSensor, exportSensors, parseListQuery, sensorPage, sensorView, validateSensorInput } from '$lib/server/services/sensors';
import { workingCrs } from '$lib/server/services/working-crs';

/**
 * GET /api/v1/networks/:id/sensors?sort=&dir=&type=&status=&q=&page=&perPage=
 * With format=csv or format=geojson: the whole inventory as a download.
 */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'sensor.view');
	const format = event.url.searchParams.get('format');
	if (format === 'csv' || format === 'geojson') {
		const body = await exportSensors(getDb(), network.id, format);
		const name = `${network.slug}-sensors.${format === 'csv' ? 'csv' : 'geojson'}`;
		return new Response(body, {
			headers: {
				'content-type': format === 'csv' ? 'text/csv; charset=utf-8' : 'application/geo+json; charset=utf-8',
				'content-disposition': `attachment; filename="${name}"`
			}
		});
	}
	if (format !== null) throw new ApiError(400, 'invalid_input', 'format must be csv or geojson.', { format: 'Use csv or geojson.' });
	return json(await sensorPage(getDb(), network, parseListQuery(event.url.searchParams)));
});

async function body(request: Request): Promise<Record<string, unknown>> {
	try {
		const b = await request.json();
		if (typeof b === 'object' && b !== null && !Array.isArray(b)) return b as Record<string, unknown>;
	} catch {
		throw new ApiError(400, 'invalid_json', 'The request body is not valid JSON.');
	}
	throw new ApiError(400, 'invalid_input', 'Send a JSON object.');
}

/** Numbers in JSON are accepted as the form's text fields. */
function asFields(b: Record<string, unknown>): Record<string, unknown> {
	return Object.fromEntries(Object.entries(b).map(([k, v]) => [k, typeof v === 'number' ? String(v) : v === null ? '' : v]));
}

/** POST /api/v1/networks/:id/sensors {code, serial, typeId, positionMode?, lon, lat | x, y, installedOn?, status?, notes?} */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'sensor.edit');
	const b = asFields(await body(event.request));
	const f = await validateSensorInput(getDb(), network, b);
	const id = await createSensor(getDb(), network, actor.id, f);
	return json({ sensor: sensorView((await findSensor(getDb(), network.id, id))!, await workingCrs(getDb(), network)) }, { status: 201 });
});
