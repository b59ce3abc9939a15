/** Sensor types: create, update and delete, each audited in the same transaction. */
import type { Knex } from 'knex';
import { z } from 'zod';
import { recordAudit } from '../repositories/audit';
import {
	deleteSensorType,
	findSensorType,
	insertSensorType,
	listSensorTypes,
	sensorsOfTypeCount,
	sensorTypeNameTaken,
	updateSensorType,
	FOOTPRINTS,
	type Footprint,
	type SensorTypeFields,
	type SensorTypeRow
} from '../repositories/sensor-types';
import { MOBILITIES } from '../../engine/types';
import { ServiceError } from './errors';

export const sensorTypeInput = z.object({
	name: z.string().trim().min(2, 'Give the type a name of at least 2 characters.').max(100, 'Keep the name under 100 characters.'),
	radiusM: z.coerce
		.number({ error: 'The sensing radius is a number of metres.' })
		.refine(Number.isFinite, 'The sensing radius is a number of metres.')
		.gt(0, 'The sensing radius must be more than 0 m.')
		.max(100_000, 'A sensing radius over 100 km is not plausible.'),
	footprint: z.enum(FOOTPRINTS as ['point', 'area'], { error: 'Choose point (a probe) or area (a large-footprint sensor).' }).default('point'),
	mobility: z.enum(MOBILITIES as ['fixed', 'relocatable', 'mobile'], { error: 'Choose fixed, relocatable or mobile.' }),
	relocationMinutes: z.preprocess(
		(v) => (v === '' || v === undefined ? null : v),
		z.coerce.number({ error: 'Relocation effort is a whole number of person-minutes.' }).int('Relocation effort is a whole number of person-minutes.').min(0, 'Relocation effort cannot be negative.').max(100_000, 'Relocation effort is too large.').nullable()
	),
	notes: z.string().trim().max(1000, 'Keep the notes under 1000 characters.').default('')
});

/** A parsed sensor type; `footprint` may be left out by callers that build one in code (default a point). */
export type SensorTypeInput = Omit<z.infer<typeof sensorTypeInput>, 'footprint'> & { footprint?: Footprint };

export function sensorTypeView(t: SensorTypeRow) {
	return { id: t.id, name: t.name, radiusM: Number(t.radius_m), footprint: t.footprint, mobility: t.mobility, relocationMinutes: t.relocation_minutes, notes: t.notes };
}
export type SensorTypeView = ReturnType<typeof sensorTypeView>;

function fields(i: SensorTypeInput): SensorTypeFields {
	return { name: i.name, radius_m: i.radiusM, footprint: i.footprint ?? 'point', mobility: i.mobility, relocation_minutes: i.relocationMinutes, notes: i.notes };
}

export async function sensorTypesOf(db: Knex, networkId: number): Promise<SensorTypeView[]> {
	return (await listSensorTypes(db, networkId)).map(sensorTypeView);
}

export async function createSensorType(db: Knex, organisationId: number, networkId: number, actorId: number, input: SensorTypeInput): Promise<number> {
	return db.transaction(async (trx) => {
		if (await sensorTypeNameTaken(trx, networkId, input.name)) throw new ServiceError(409, 'name_taken', `A sensor type named "${input.name}" already exists.`, 'name');
		const f = fields(input);
		const id = await insertSensorType(trx, networkId, f);
		await recordAudit(trx, { organisationId, actorUserId: actorId, action: 'sensor_type.create', objectType: 'sensor_type', objectId: id, after: { network_id: networkId, ...f } });
		return id;
	});
}

export async function updateSensorTypeDetails(db: Knex, organisationId: number, networkId: number, actorId: number, typeId: number, input: SensorTypeInput): Promise<void> {
	await db.transaction(async (trx) => {
		const before = await findSensorType(trx, networkId, typeId);
		if (!before) throw new ServiceError(404, 'not_found', 'No such sensor type.');
		if (await sensorTypeNameTaken(trx, networkId, input.name, typeId)) throw new ServiceError(409, 'name_taken', `A sensor type named "${input.name}" already exists.`, 'name');
		const f = fields(input);
		await updateSensorType(trx, networkId, typeId, f);
		const { id: _i, network_id: _n, ...was } = before;
		await recordAudit(trx, { organisationId, actorUserId: actorId, action: 'sensor_type.update', objectType: 'sensor_type', objectId: typeId, before: was, after: f });
	});
}

export async function removeSensorType(db: Knex, organisationId: number, networkId: number, actorId: number, typeId: number): Promise<void> {
	await db.transaction(async (trx) => {
		const before = await findSensorType(trx, networkId, typeId);
		if (!before) throw new ServiceError(404, 'not_found', 'No such sensor type.');
		const n = await sensorsOfTypeCount(trx, typeId);
		if (n > 0) throw new ServiceError(409, 'in_use', `${n} sensor${n === 1 ? ' is' : 's are'} of this type; change or remove them first.`);
		await deleteSensorType(trx, networkId, typeId);
		await recordAudit(trx, { organisationId, actorUserId: actorId, action: 'sensor_type.delete', objectType: 'sensor_type', objectId: typeId, before });
	});
}
