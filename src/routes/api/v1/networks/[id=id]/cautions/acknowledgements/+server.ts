import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, ApiError } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { acknowledgeCautions } from '$lib/server/services/field-cautions';

/**
 * POST /api/v1/networks/:id/cautions/acknowledgements, {acknowledgedAt?} (ISO 8601; default now):
 * the signed-in technician has read the field cautions (task.work; always for themselves)
 *   → 201 {acknowledgement: {networkId, day, acknowledgedAt}}; the same day again → 200 with the
 *   first acknowledgement and `replayed: true`, nothing written twice.
 */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'task.work');
	let body: unknown = {};
	const text = await event.request.text();
	if (text.trim() !== '') {
		try {
			body = JSON.parse(text);
		} catch {
			throw new ApiError(400, 'invalid_json', 'The request body is not valid JSON.');
		}
	}
	const r = await acknowledgeCautions(getDb(), network, actor, body);
	return json(r.replayed ? { acknowledgement: r.acknowledgement, replayed: true } : { acknowledgement: r.acknowledgement }, { status: r.replayed ? 200 : 201 });
});
