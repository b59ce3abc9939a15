import type { PageServerLoad } from './$types';
import { getDb } from '$lib/server/db';
import { getObjectStore } from '$lib/server/storage/app-store';
import { networkAccess } from '$lib/server/auth/network-access';
import { currentTasks } from '$lib/server/services/field-tasks';
import { routeMap } from '$lib/server/services/route-map';
import { importanceSource } from '../../../../../api/v1/networks/[id=id]/map/importance-source';

// The printable task sheet of the signed-in technician's route (print CSS; no script needed).
export const load = (async (event) => {
	const { network, actor } = await networkAccess(event, 'task.work');
	const db = getDb();
	const tasks = (await currentTasks(db, network.id, { assigneeId: actor.id })).filter((t) => t.state !== 'cancelled');
	return { networkId: network.id, networkName: network.name, technician: actor.name, printedOn: new Date().toISOString().slice(0, 10), tasks, map: await routeMap(db, network, tasks, importanceSource(), getObjectStore()) };
}) satisfies PageServerLoad;
