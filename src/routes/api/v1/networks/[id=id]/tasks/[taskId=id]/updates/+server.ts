import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, ApiError } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { applyTaskUpdate } from '$lib/server/services/field-tasks';

/**
 * POST /api/v1/networks/:id/tasks/:taskId/updates, header Idempotency-Key,
 * {state, position?: {lon, lat, accuracyM?}, note?, reason?, fromState?}
 *   → 200 {task}; the same key again → the first answer ({task, replayed: true}), nothing applied twice;
 *   409 {error: {code: 'conflict'}, task} when the task's state no longer allows it (another device first);
 *   422 idempotency_key_reused for a key already used with another body.
 */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'task.work');
	const key = event.request.headers.get('idempotency-key');
	if (!key) throw new ApiError(400, 'idempotency_key', 'Send an Idempotency-Key header (a UUID is good).');
	let body: unknown;
	try {
		body = await event.request.json();
	} catch {
		throw new ApiError(400, 'invalid_json', 'The request body is not valid JSON.');
	}
	const result = await applyTaskUpdate(getDb(), network, actor, Number(event.params.taskId), key, body);
	return json(result.body, { status: result.status });
});
