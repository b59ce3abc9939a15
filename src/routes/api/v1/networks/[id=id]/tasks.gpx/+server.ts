import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { currentTasks, resolveAssignee, tasksGpx } from '$lib/server/services/field-tasks';

/** GET /api/v1/networks/:id/tasks.gpx?assignee=me → GPX 1.1: the active tasks as waypoints (and a route) in route order. */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network, actor, role } = await networkAccess(event, 'task.view');
	const assigneeId = resolveAssignee(event.url.searchParams.get('assignee'), actor, role);
	const tasks = await currentTasks(getDb(), network.id, { assigneeId });
	const who = assigneeId === actor.id ? actor.name : (tasks[0]?.assignee?.name ?? null);
	const body = tasksGpx(network.name, assigneeId === undefined ? null : who, tasks);
	return new Response(body, {
		headers: { 'content-type': 'application/gpx+xml; charset=utf-8', 'content-disposition': `attachment; filename="${network.slug}-route.gpx"`, 'cache-control': 'private, no-store' }
	});
});
