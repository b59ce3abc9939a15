import { fail } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { getDb } from '$lib/server/db';
import { networkAccess } from '$lib/server/auth/network-access';
import { roleAllows } from '$lib/server/auth/roles';
import { formFields, parseForm, serviceFailure } from '$lib/server/forms';
import { findSensor } from '$lib/server/repositories/sensors';
import { createSensorType, removeSensorType, sensorTypeInput, sensorTypesOf, updateSensorTypeDetails } from '$lib/server/services/sensor-types';
import {
	createSensor,
	editSensor,
	importSensors,
	parseListQuery,
	PER_PAGE_CHOICES,
	removeSensor,
	sensorPage,
	sensorView,
	validateSensorInput
} from '$lib/server/services/sensors';
import { workingCrs } from '$lib/server/services/working-crs';

const SENSOR_FIELDS = ['code', 'serial', 'typeId', 'positionMode', 'lon', 'lat', 'x', 'y', 'installedOn', 'status', 'notes'];
const TYPE_FIELDS = ['name', 'radiusM', 'mobility', 'relocationMinutes', 'notes'];
/** Largest inventory file accepted by the page (the importer also caps the rows). */
const MAX_IMPORT_BYTES = 5 * 1024 * 1024;

export const load = (async (event) => {
	const { network, role } = await networkAccess(event, 'sensor.view');
	const db = getDb();
	const query = parseListQuery(event.url.searchParams);
	const canEdit = roleAllows(role, 'sensor.edit');
	const editId = Number(event.url.searchParams.get('edit'));
	const editing = canEdit && Number.isInteger(editId) && editId > 0 ? await findSensor(db, network.id, editId) : undefined;
	const crs = await workingCrs(db, network);
	return {
		network: { id: network.id, slug: network.slug, crsEpsg: network.crs_epsg },
		query,
		perPageChoices: PER_PAGE_CHOICES,
		list: await sensorPage(db, network, query),
		sensorTypes: await sensorTypesOf(db, network.id),
		workingCrs: crs,
		canEdit,
		editing: editing ? sensorView(editing, crs) : null,
		editTypeId: canEdit ? Number(event.url.searchParams.get('editType')) || null : null
	};
}) satisfies PageServerLoad;

function sensorFailure(err: unknown, values: Record<string, string>, action: string) {
	const f = serviceFailure(err, values);
	return fail(f.status, { ...f.data, action });
}

export const actions = {
	createType: async (event) => {
		const { network, actor } = await networkAccess(event, 'sensor.edit');
		const values = formFields(await event.request.formData(), TYPE_FIELDS);
		const parsed = parseForm(sensorTypeInput, values, TYPE_FIELDS);
		if (!parsed.ok) return fail(400, { ...parsed.failure.data, action: 'type' });
		try {
			await createSensorType(getDb(), network.organisation_id, network.id, actor.id, parsed.data);
		} catch (err) {
			const f = serviceFailure(err, values);
			return fail(f.status, { ...f.data, action: 'type' });
		}
		return { action: 'type', saved: 'Sensor type added.' };
	},
	updateType: async (event) => {
		const { network, actor } = await networkAccess(event, 'sensor.edit');
		const data = await event.request.formData();
		const values = formFields(data, TYPE_FIELDS);
		const typeId = Number(data.get('typeId'));
		if (!Number.isInteger(typeId) || typeId < 1) return fail(400, { action: 'type', errors: { _: 'Choose a sensor type to change.' }, values });
		const parsed = parseForm(sensorTypeInput, values, TYPE_FIELDS);
		if (!parsed.ok) return fail(400, { ...parsed.failure.data, action: 'type', typeId });
		try {
			await updateSensorTypeDetails(getDb(), network.organisation_id, network.id, actor.id, typeId, parsed.data);
		} catch (err) {
			const f = serviceFailure(err, values);
			return fail(f.status, { ...f.data, action: 'type', typeId });
		}
		return { action: 'type', saved: 'Sensor type saved.' };
	},
	deleteType: async (event) => {
		const { network, actor } = await networkAccess(event, 'sensor.edit');
		const typeId = Number((await event.request.formData()).get('typeId'));
		if (!Number.isInteger(typeId) || typeId < 1) return fail(400, { action: 'type', errors: { _: 'Choose a sensor type to remove.' }, values: {} });
		try {
			await removeSensorType(getDb(), network.organisation_id, network.id, actor.id, typeId);
		} catch (err) {
			const f = serviceFailure(err, {});
			return fail(f.status, { ...f.data, action: 'type' });
		}
		return { action: 'type', saved: 'Sensor type removed.' };
	},
	create: async (event) => {
		const { network, actor } = await networkAccess(event, 'sensor.edit');
		const values = formFields(await event.request.formData(), SENSOR_FIELDS);
		try {
			const f = await validateSensorInput(getDb(), network, values);
			await createSensor(getDb(), network, actor.id, f);
			return { action: 'sensor', saved: `Sensor ${f.code} added.` };
		} catch (err) {
			return sensorFailure(err, values, 'sensor');
		}
	},
	update: async (event) => {
		const { network, actor } = await networkAccess(event, 'sensor.edit');
		const data = await event.request.formData();
		const values = formFields(data, SENSOR_FIELDS);
		const sensorId = Number(data.get('sensorId'));
		const version = Number(data.get('version'));
		if (!Number.isInteger(sensorId) || sensorId < 1 || !Number.isInteger(version) || version < 1) {
			return fail(400, { action: 'sensor', errors: { _: 'Open the sensor to edit it again.' }, values });
		}
		try {
			const f = await validateSensorInput(getDb(), network, values);
			await editSensor(getDb(), network, actor.id, sensorId, version, f);
			return { action: 'sensor', saved: `Sensor ${f.code} saved.` };
		} catch (err) {
			return sensorFailure(err, values, 'sensor');
		}
	},
	delete: async (event) => {
		const { network, actor } = await networkAccess(event, 'sensor.edit');
		const data = await event.request.formData();
		const sensorId = Number(data.get('sensorId'));
		const version = Number(data.get('version'));
		if (!Number.isInteger(sensorId) || sensorId < 1 || !Number.isInteger(version) || version < 1) {
			return fail(400, { action: 'list', errors: { _: 'Choose a sensor to remove.' }, values: {} });
		}
		try {
			await removeSensor(getDb(), network, actor.id, sensorId, version);
		} catch (err) {
			return sensorFailure(err, {}, 'list');
		}
		return { action: 'list', saved: 'Sensor removed.' };
	},
	import: async (event) => {
		const { network, actor } = await networkAccess(event, 'sensor.edit');
		const file = (await event.request.formData()).get('file');
		if (!(file instanceof File) || file.size === 0) return fail(400, { action: 'import', errors: { file: 'Choose a CSV or GeoJSON file.' }, values: {} });
		if (file.size > MAX_IMPORT_BYTES) return fail(400, { action: 'import', errors: { file: 'The file is larger than 5 MB; split it.' }, values: {} });
		const text = await file.text();
		const format = /\.(geo)?json$/i.test(file.name) || text.trimStart().startsWith('{') ? 'geojson' : 'csv';
		const r = await importSensors(getDb(), network, actor.id, text, format, file.name);
		if (!r.ok) return fail(400, { action: 'import', errors: { file: `Nothing was imported: ${r.errors.length} problem${r.errors.length === 1 ? '' : 's'} in ${file.name}.` }, values: {}, report: r.errors.slice(0, 500), reportTotal: r.errors.length, format });
		return { action: 'import', saved: `Imported ${r.count} sensor${r.count === 1 ? '' : 's'} from ${file.name}.` };
	}
} satisfies Actions;
