import { randomUUID } from 'node:crypto';
import { fail, redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { getDb } from '$lib/server/db';
import { getObjectStore } from '$lib/server/storage/app-store';
import { networkAccess } from '$lib/server/auth/network-access';
import { ServiceError } from '$lib/server/services/errors';
import { applyTaskUpdate, currentTasks, fieldSettings } from '$lib/server/services/field-tasks';
import { routeMap } from '$lib/server/services/route-map';
import { basemapSettings } from '$lib/server/http/basemap';
import { photosOfTasks } from '$lib/server/services/field-photos';
import { acknowledgeCautions, cautionsAcknowledged } from '$lib/server/services/field-cautions';
import { updateFromForm } from '$lib/field/update-form';
import { importanceSource } from '../../../../api/v1/networks/[id=id]/map/importance-source';

export const load = (async (event) => {
	const { network, actor } = await networkAccess(event, 'task.work');
	const db = getDb();
	const tasks = await currentTasks(db, network.id, { assigneeId: actor.id });
	const sensorIds = tasks.map((t) => t.sensorId).filter((v): v is number => v !== null);
	const typeIds = tasks.map((t) => t.sensorTypeId).filter((v): v is number => v !== null);
	const sensors = sensorIds.length ? await db('sensors').select('id', 'serial', 'status', 'notes').whereIn('id', sensorIds).where({ network_id: network.id }) : [];
	const types = typeIds.length ? await db('sensor_types').select('id', 'name', 'radius_m', 'notes').whereIn('id', typeIds).where({ network_id: network.id }) : [];
	const sensorById = new Map(sensors.map((s: { id: number; serial: string; status: string; notes: string }) => [s.id, s]));
	const typeById = new Map(types.map((t: { id: number; name: string; radius_m: number; notes: string }) => [t.id, { name: t.name, radiusM: Number(t.radius_m), notes: t.notes }]));

	const active = tasks.filter((t) => t.state !== 'cancelled');
	return {
		networkId: network.id,
		networkName: network.name,
		tasks: active.map((t) => ({
			...t,
			sensor: t.sensorId ? (sensorById.get(t.sensorId) ?? null) : null,
			type: t.sensorTypeId ? (typeById.get(t.sensorTypeId) ?? null) : null,
			// One fresh idempotency key per form and render: a resubmitted form applies once.
			keys: { started: randomUUID(), done: randomUUID(), blocked: randomUUID(), open: randomUUID() }
		})),
		toleranceM: (await fieldSettings(db, network.id)).installToleranceM,
		// Read today (UTC day) by this technician, on any device.
		cautionsAcknowledged: await cautionsAcknowledged(db, network.id, actor.id),
		map: await routeMap(db, network, active, importanceSource(), getObjectStore(), { web: basemapSettings() !== null }),
		photos: await photosOfTasks(db, network.id, active.map((t) => t.id))
	};
}) satisfies PageServerLoad;

export const actions = {
	acknowledge: async (event) => {
		const { network, actor } = await networkAccess(event, 'task.work');
		await acknowledgeCautions(getDb(), network, actor, {});
		redirect(303, `/networks/${network.id}/field`);
	},
	update: async (event) => {
		const { network, actor } = await networkAccess(event, 'task.work');
		const { taskId, key, body } = updateFromForm(await event.request.formData());
		try {
			const r = await applyTaskUpdate(getDb(), network, actor, taskId, key, body);
			if (r.status === 409) return fail(409, { taskId, message: 'error' in r.body ? r.body.error.message : 'Conflict.' });
		} catch (e) {
			if (e instanceof ServiceError) return fail(e.status, { taskId, message: e.message, field: e.field ?? null });
			throw e;
		}
		redirect(303, `/networks/${network.id}/field#task-${taskId}`);
	}
} satisfies Actions;
