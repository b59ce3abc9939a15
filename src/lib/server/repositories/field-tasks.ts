/**
 * Field tasks of plans and the updates technicians send for them (see the field_tasks migration).
 */
import type { Db } from '../db';

export type TaskKind = 'move' | 'install' | 'remove';
export type TaskState = 'open' | 'started' | 'done' | 'blocked' | 'cancelled';
export const ACTIVE_STATES: readonly TaskState[] = ['open', 'started', 'blocked'];

export interface TaskRow {
	id: number;
	network_id: number;
	plan_id: number;
	kind: TaskKind;
	sensor_id: number | null;
	sensor_code: string;
	sensor_type_id: number | null;
	site: string | null;
	from_lon: number | null;
	from_lat: number | null;
	target_lon: number;
	target_lat: number;
	route_x: number;
	route_y: number;
	distance_m: number | null;
	bearing_deg: number | null;
	state: TaskState;
	assignee_id: number | null;
	assignee_name: string | null;
	route_order: number | null;
	blocked_reason: string | null;
	note: string;
	cancel_reason: string | null;
	installed_lon: number | null;
	installed_lat: number | null;
	installed_accuracy_m: number | null;
	offset_m: number | null;
	offset_flagged: number | boolean;
	version: number;
	created_at: Date;
	updated_at: Date;
	done_at: Date | null;
}

export type NewTask = Pick<TaskRow, 'network_id' | 'plan_id' | 'kind' | 'sensor_id' | 'sensor_code' | 'sensor_type_id' | 'site' | 'from_lon' | 'from_lat' | 'target_lon' | 'target_lat' | 'route_x' | 'route_y' | 'distance_m' | 'bearing_deg' | 'route_order'>;

const taskColumns = [
	't.id', 't.network_id', 't.plan_id', 't.kind', 't.sensor_id', 't.sensor_code', 't.sensor_type_id', 't.site', 't.from_lon', 't.from_lat', 't.target_lon', 't.target_lat',
	't.route_x', 't.route_y', 't.distance_m', 't.bearing_deg', 't.state', 't.assignee_id', 'u.name as assignee_name', 't.route_order', 't.blocked_reason', 't.note',
	't.cancel_reason', 't.installed_lon', 't.installed_lat', 't.installed_accuracy_m', 't.offset_m', 't.offset_flagged', 't.version', 't.created_at', 't.updated_at', 't.done_at'
];

const taskQuery = (db: Db) => db('field_tasks as t').leftJoin('users as u', 'u.id', 't.assignee_id').select(taskColumns);

export async function insertTasks(db: Db, rows: NewTask[]): Promise<void> {
	for (let i = 0; i < rows.length; i += 200) await db('field_tasks').insert(rows.slice(i, i + 200).map((r) => ({ ...r, note: '' })));
}

export interface TaskFilter {
	planId?: number;
	assigneeId?: number;
	states?: readonly TaskState[];
	ids?: number[];
}

/** Tasks of a network in route order per assignee (unassigned last), then by id. */
export async function listTasks(db: Db, networkId: number, f: TaskFilter = {}): Promise<TaskRow[]> {
	const q = taskQuery(db).where('t.network_id', networkId);
	if (f.planId !== undefined) q.where('t.plan_id', f.planId);
	if (f.assigneeId !== undefined) q.where('t.assignee_id', f.assigneeId);
	if (f.states) q.whereIn('t.state', f.states as TaskState[]);
	if (f.ids) q.whereIn('t.id', f.ids);
	return q.orderByRaw('t.assignee_id IS NULL, t.assignee_id, t.route_order IS NULL, t.route_order, t.id');
}

export async function findTask(db: Db, networkId: number, id: number, opts: { forUpdate?: boolean } = {}): Promise<TaskRow | undefined> {
	const q = taskQuery(db).where({ 't.network_id': networkId, 't.id': id }).first();
	return opts.forUpdate ? q.forUpdate() : q;
}

export async function updateTask(db: Db, id: number, patch: Partial<Omit<TaskRow, 'id' | 'assignee_name'>>): Promise<void> {
	await db('field_tasks').where({ id }).update({ ...patch, version: db.raw('version + 1'), updated_at: db.raw('CURRENT_TIMESTAMP(3)') });
}

export interface TaskUpdateRow {
	id: number;
	task_id: number;
	idempotency_key: string;
	request_hash: string;
	status: number;
	response: unknown;
}

export async function findUpdateByKey(db: Db, networkId: number, key: string): Promise<TaskUpdateRow | undefined> {
	const row = await db('field_task_updates').select('id', 'task_id', 'idempotency_key', 'request_hash', 'status', 'response').where({ network_id: networkId, idempotency_key: key }).forUpdate().first();
	return row ? { ...row, response: typeof row.response === 'string' ? JSON.parse(row.response) : row.response } : undefined;
}

export async function insertUpdate(db: Db, u: { network_id: number; task_id: number; idempotency_key: string; request_hash: string; user_id: number; from_state: string; to_state: string; status: number; response: unknown }): Promise<void> {
	await db('field_task_updates').insert({ ...u, response: JSON.stringify(u.response) });
}
