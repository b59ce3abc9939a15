import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, readJson } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { appOrigin } from '$lib/server/mail/origin';
import { kickOutbox } from '$lib/server/mail/outbox';
import { assignInput, assignTasks, currentTasks } from '$lib/server/services/field-tasks';

/**
 * POST /api/v1/networks/:id/tasks/assignments
 *   {taskIds: [...], assigneeId: n | null, start?: {lon, lat}}   chosen tasks to one technician (null: unassign)
 *   {spread: true, assigneeIds: [...], start?: {lon, lat}}      every unassigned task spread over technicians
 * → {tasks: [...]} the current plan's tasks; each technician's route reordered from `start` and e-mailed.
 */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'task.assign');
	const input = await readJson(event, assignInput);
	const db = getDb();
	await assignTasks(db, network, actor, input, appOrigin());
	void kickOutbox().catch(() => undefined);
	return json({ tasks: await currentTasks(db, network.id) });
});
