import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { currentTasks, resolveAssignee } from '$lib/server/services/field-tasks';

/**
 * GET /api/v1/networks/:id/tasks?assignee=me|<userId> → {tasks: [{id, kind, sensorId, target: {lon, lat},
 * state, order, …}]}: the current plan's tasks in route order. Technicians may ask for their own only.
 */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network, actor, role } = await networkAccess(event, 'task.view');
	const assigneeId = resolveAssignee(event.url.searchParams.get('assignee'), actor, role);
	return json({ tasks: await currentTasks(getDb(), network.id, { assigneeId }) });
});
