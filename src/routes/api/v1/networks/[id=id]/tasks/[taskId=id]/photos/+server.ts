import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { getObjectStore } from '$lib/server/storage/app-store';
import { addTaskPhoto } from '$lib/server/services/field-photos';

/**
 * POST /api/v1/networks/:id/tasks/:taskId/photos, the image's bytes as the body (JPEG or PNG,
 * judged by content), optional header Idempotency-Key
 *   → 201 {photo}; the same key again → 200 {photo, replayed: true}, stored once;
 *   415 unsupported_image for anything else; 413 over the body limit. Only the assignee may add.
 */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'task.work');
	const bytes = new Uint8Array(await event.request.arrayBuffer());
	const r = await addTaskPhoto(getDb(), getObjectStore(), network, actor, Number(event.params.taskId), bytes, event.request.headers.get('idempotency-key'));
	return json(r.replayed ? { photo: r.photo, replayed: true } : { photo: r.photo }, { status: r.replayed ? 200 : 201 });
});
