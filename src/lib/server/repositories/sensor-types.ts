/** Sensor types of a network: name, sensing radius, what it senses, mobility and relocation effort. */
import type { Db } from '../db';
import type { Mobility } from '../../engine/types';

/** `point`: a probe (its radius is a siting choice); `area`: a large-footprint sensor (its radius is physical). */
export type Footprint = 'point' | 'area';
export const FOOTPRINTS: readonly Footprint[] = ['point', 'area'];

export interface SensorTypeRow {
	id: number;
	network_id: number;
	name: string;
	radius_m: number;
	footprint: Footprint;
	mobility: Mobility;
	relocation_minutes: number | null;
	notes: string;
}

const columns = ['id', 'network_id', 'name', 'radius_m', 'footprint', 'mobility', 'relocation_minutes', 'notes'] as const;

export type SensorTypeFields = Omit<SensorTypeRow, 'id' | 'network_id'>;

export async function listSensorTypes(db: Db, networkId: number): Promise<SensorTypeRow[]> {
	return db('sensor_types').select(columns).where({ network_id: networkId }).orderBy('name');
}

export async function findSensorType(db: Db, networkId: number, id: number): Promise<SensorTypeRow | undefined> {
	return db('sensor_types').select(columns).where({ network_id: networkId, id }).first();
}

export async function sensorTypeNameTaken(db: Db, networkId: number, name: string, exceptId?: number): Promise<boolean> {
	const q = db('sensor_types').select('id').where({ network_id: networkId, name });
	if (exceptId !== undefined) q.whereNot({ id: exceptId });
	return !!(await q.first());
}

export async function insertSensorType(db: Db, networkId: number, f: SensorTypeFields): Promise<number> {
	const [id] = await db('sensor_types').insert({ ...f, network_id: networkId });
	return id;
}

export async function updateSensorType(db: Db, networkId: number, id: number, f: Partial<SensorTypeFields>): Promise<boolean> {
	return (await db('sensor_types').where({ network_id: networkId, id }).update(f)) === 1;
}

export async function sensorsOfTypeCount(db: Db, typeId: number): Promise<number> {
	const row = await db('sensors').count<{ n: number }[]>({ n: '*' }).where({ sensor_type_id: typeId });
	return Number(row[0]?.n ?? 0);
}

export async function deleteSensorType(db: Db, networkId: number, id: number): Promise<boolean> {
	return (await db('sensor_types').where({ network_id: networkId, id }).delete()) === 1;
}
