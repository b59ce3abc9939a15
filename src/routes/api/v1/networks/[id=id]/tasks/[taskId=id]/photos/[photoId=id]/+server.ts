import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { roleAllows } from '$lib/server/auth/roles';
import { getObjectStore } from '$lib/server/storage/app-store';
import { readTaskPhoto } from '$lib/server/services/field-photos';

/**
 * GET /api/v1/networks/:id/tasks/:taskId/photos/:photoId → the image (private, never cached by
 * shared caches). Analysts and admins see every task's photos; a technician only their own tasks'.
 */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network, actor, role } = await networkAccess(event, 'task.view');
	const ownTasksOnly = !roleAllows(role, 'task.assign');
	const photo = await readTaskPhoto(getDb(), getObjectStore(), network.id, Number(event.params.taskId), Number(event.params.photoId), { id: actor.id, ownTasksOnly });
	return new Response(new Uint8Array(photo.body), {
		headers: { 'content-type': photo.contentType, 'cache-control': 'private, max-age=3600', 'content-disposition': 'inline', 'x-content-type-options': 'nosniff' }
	});
});
