import { redirect, type RequestEvent } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { getDb } from '$lib/server/db';
import { networkAccess } from '$lib/server/auth/network-access';
import { serviceFailure } from '$lib/server/forms';
import { appOrigin } from '$lib/server/mail/origin';
import { kickOutbox } from '$lib/server/mail/outbox';
import { currentPlanView } from '$lib/server/services/reviews';
import { photosOfTasks } from '$lib/server/services/field-photos';
import { assignTasks, currentTasks, taskProgress, technicians, type AssignInput } from '$lib/server/services/field-tasks';

export const load = (async (event) => {
	const { network } = await networkAccess(event, 'task.assign');
	const db = getDb();
	const tasks = await currentTasks(db, network.id);
	const people = (await technicians(db, network.organisation_id)).map(({ id, name }) => ({ id, name }));
	const photos = await photosOfTasks(db, network.id, tasks.map((t) => t.id));
	return { networkId: network.id, plan: await currentPlanView(db, network.id), tasks, progress: taskProgress(tasks), technicians: people, photos };
}) satisfies PageServerLoad;

function startOf(data: FormData): { lon: number; lat: number } | undefined {
	const lon = String(data.get('startLon') ?? '').trim();
	const lat = String(data.get('startLat') ?? '').trim();
	return lon && lat ? { lon: Number(lon), lat: Number(lat) } : undefined;
}

async function assign(event: RequestEvent, input: AssignInput) {
	const { network, actor } = await networkAccess(event, 'task.assign');
	try {
		await assignTasks(getDb(), network, actor, input, appOrigin());
	} catch (e) {
		return serviceFailure(e);
	}
	void kickOutbox().catch(() => undefined);
	redirect(303, `/networks/${network.id}/tasks`);
}

export const actions = {
	assign: async (event) => {
		const data = await event.request.formData();
		const who = String(data.get('assigneeId') ?? '');
		return assign(event, { taskIds: data.getAll('taskId').map(Number), assigneeId: who === '' ? null : Number(who), start: startOf(data) });
	},
	spread: async (event) => {
		const data = await event.request.formData();
		return assign(event, { spread: true as const, assigneeIds: data.getAll('assigneeId').map(Number), start: startOf(data) });
	}
} satisfies Actions;
