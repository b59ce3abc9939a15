/**
 * Field tasks: the work an approved plan makes, its assignment to technicians in route order, and
 * the updates technicians send from the field.
 *
 *   createTasksForPlan  in the approval's transaction: one task per move (from → to, geodesic
 *                       distance and bearing), per installation and per removal; the open tasks of
 *                       the superseded plan are cancelled, with the reason, and their technicians told.
 *   assignTasks         by the analyst: chosen tasks to one technician, or every unassigned task
 *                       spread over several (contiguous stretches of the plan's route); each
 *                       technician's active tasks are then put in route order (the engine's
 *                       routeOrder, in the plan's working CRS) from an optional start point, and the
 *                       technician is e-mailed through the outbox.
 *   applyTaskUpdate     by the assigned technician, keyed by an idempotency key: the same key again
 *                       returns the first answer and applies nothing twice; a transition the task's
 *                       current state does not allow (another device got there first) is a 409 with
 *                       the task as it stands, never an overwrite. Done moves the inventory: the
 *                       sensor takes the as-installed position (a new sensor for an installation,
 *                       retired for a removal) in the same transaction, with an audit entry, and an
 *                       offset beyond the network's tolerance is flagged.
 */
import { createHash } from 'node:crypto';
import type { Knex } from 'knex';
import { z } from 'zod';
import type { Db } from '../db';
import { routeOrder, type Point } from '../../engine/moves';
import { parseEpsg, transformer } from '../../geo/crs';
import { geodesicDistanceBearing } from '../../geo/geodesic';
import { routeGpx } from '../../geo/gpx';
import { roleAllows, type Role } from '../auth/roles';
import { recordAudit } from '../repositories/audit';
import { enqueueMail } from '../repositories/outbox';
import { findSensor, findSensorByCode, insertSensor, updateSensor } from '../repositories/sensors';
import {
	ACTIVE_STATES,
	findTask,
	findUpdateByKey,
	insertTasks,
	insertUpdate,
	listTasks,
	updateTask,
	type NewTask,
	type TaskKind,
	type TaskRow,
	type TaskState
} from '../repositories/field-tasks';
import { fieldTasksAssignedMail, fieldTasksCancelledMail } from '../mail/templates';
import type { RevisionInputs, RevisionOutputs } from './placement';
import { ServiceError } from './errors';

interface NetworkRef {
	id: number;
	organisation_id: number;
	name: string;
}

function parseOr400<T>(schema: z.ZodType<T>, raw: unknown): T {
	const r = schema.safeParse(raw);
	if (r.success) return r.data;
	throw ServiceError.fromZod(r.error);
}

export const fieldUrl = (origin: string, networkId: number) => `${origin.replace(/\/$/, '')}/networks/${networkId}/field`;

// ---------------------------------------------------------------- views

export interface TaskView {
	id: number;
	kind: TaskKind;
	sensorId: number | null;
	sensorCode: string;
	sensorTypeId: number | null;
	site: string | null;
	planId: number;
	from: { lon: number; lat: number } | null;
	target: { lon: number; lat: number };
	distanceM: number | null;
	bearingDeg: number | null;
	state: TaskState;
	order: number | null;
	assignee: { id: number; name: string | null } | null;
	blockedReason: string | null;
	note: string;
	cancelReason: string | null;
	installed: { lon: number; lat: number; accuracyM: number | null } | null;
	offsetM: number | null;
	offsetFlagged: boolean;
	version: number;
	updatedAt: string;
	doneAt: string | null;
}

export function taskView(t: TaskRow): TaskView {
	const num = (v: number | null) => (v === null ? null : Number(v));
	return {
		id: t.id,
		kind: t.kind,
		sensorId: t.sensor_id,
		sensorCode: t.sensor_code,
		sensorTypeId: t.sensor_type_id,
		site: t.site,
		planId: t.plan_id,
		from: t.from_lon === null || t.from_lat === null ? null : { lon: Number(t.from_lon), lat: Number(t.from_lat) },
		target: { lon: Number(t.target_lon), lat: Number(t.target_lat) },
		distanceM: num(t.distance_m),
		bearingDeg: num(t.bearing_deg),
		state: t.state,
		order: t.route_order,
		assignee: t.assignee_id === null ? null : { id: t.assignee_id, name: t.assignee_name },
		blockedReason: t.blocked_reason,
		note: t.note,
		cancelReason: t.cancel_reason,
		installed: t.installed_lon === null || t.installed_lat === null ? null : { lon: Number(t.installed_lon), lat: Number(t.installed_lat), accuracyM: num(t.installed_accuracy_m) },
		offsetM: num(t.offset_m),
		offsetFlagged: !!t.offset_flagged,
		version: t.version,
		updatedAt: t.updated_at.toISOString(),
		doneAt: t.done_at ? t.done_at.toISOString() : null
	};
}

/** The current plan's tasks (optionally one technician's), in route order. */
export async function currentTasks(db: Db, networkId: number, opts: { assigneeId?: number } = {}): Promise<TaskView[]> {
	const plan = await db('plans').select('id').where({ network_id: networkId, state: 'current' }).first();
	if (!plan) return [];
	return (await listTasks(db, networkId, { planId: plan.id, assigneeId: opts.assigneeId })).map(taskView);
}

export interface TaskProgress {
	open: number;
	started: number;
	done: number;
	blocked: number;
	cancelled: number;
	flagged: number;
}

export function taskProgress(tasks: readonly TaskView[]): TaskProgress {
	const p: TaskProgress = { open: 0, started: 0, done: 0, blocked: 0, cancelled: 0, flagged: 0 };
	for (const t of tasks) {
		p[t.state]++;
		if (t.offsetFlagged) p.flagged++;
	}
	return p;
}

// ---------------------------------------------------------------- creation with the plan

function workingTransform(inputs: RevisionInputs) {
	return transformer(4326, parseEpsg(inputs.crs));
}

/**
 * Inside the approval's transaction: the tasks of a newly approved plan, and the cancellation of
 * the superseded plan's active tasks. Returns how many were created and cancelled.
 */
export async function createTasksForPlan(
	trx: Knex.Transaction,
	network: NetworkRef,
	actorId: number,
	planId: number,
	revision: { inputs: unknown; outputs: unknown },
	supersededPlanId: number | null,
	origin: string
): Promise<{ created: number; cancelled: number }> {
	const inputs = revision.inputs as RevisionInputs;
	const outputs = revision.outputs as RevisionOutputs;
	const toXY = workingTransform(inputs).forward;
	const snapshot = new Map(inputs.sensors.map((s) => [s.code, s]));
	const sites = new Map(outputs.targets.features.map((f) => [String(f.properties.site), f]));
	const routeRank = new Map(outputs.moves.route.order.map((code, i) => [code, i]));
	const sensorIdOf = async (code: string) => (await findSensorByCode(trx, network.id, code))?.id ?? null;

	const rows: NewTask[] = [];
	const base = { network_id: network.id, plan_id: planId, route_order: null };
	const moves = outputs.moves.assignment.filter((m) => m.planarM > 1e-6).sort((a, b) => (routeRank.get(a.id) ?? 1e9) - (routeRank.get(b.id) ?? 1e9));
	for (const m of moves) {
		const g = geodesicDistanceBearing(m.from.lon, m.from.lat, m.to.lon, m.to.lat);
		rows.push({
			...base,
			kind: 'move',
			sensor_id: await sensorIdOf(m.id),
			sensor_code: m.id,
			sensor_type_id: snapshot.get(m.id)?.typeId ?? null,
			site: m.target,
			from_lon: m.from.lon,
			from_lat: m.from.lat,
			target_lon: m.to.lon,
			target_lat: m.to.lat,
			route_x: (m.from.x + m.to.x) / 2,
			route_y: (m.from.y + m.to.y) / 2,
			distance_m: g.distanceM,
			bearing_deg: g.bearingDeg
		});
	}
	for (const site of outputs.moves.installations) {
		const f = sites.get(site);
		if (!f) continue;
		const [lon, lat] = f.geometry.coordinates;
		const [x, y] = toXY(lon, lat);
		const typeId = typeof f.properties.typeId === 'number' ? f.properties.typeId : null;
		rows.push({ ...base, kind: 'install', sensor_id: null, sensor_code: site, sensor_type_id: typeId, site, from_lon: null, from_lat: null, target_lon: lon, target_lat: lat, route_x: x, route_y: y, distance_m: null, bearing_deg: null });
	}
	for (const code of outputs.moves.removals) {
		const s = snapshot.get(code);
		if (!s) continue;
		rows.push({ ...base, kind: 'remove', sensor_id: await sensorIdOf(code), sensor_code: code, sensor_type_id: s.typeId, site: null, from_lon: null, from_lat: null, target_lon: s.lon, target_lat: s.lat, route_x: s.x, route_y: s.y, distance_m: null, bearing_deg: null });
	}
	await insertTasks(trx, rows);

	let cancelled = 0;
	if (supersededPlanId !== null) {
		const active = await listTasks(trx, network.id, { planId: supersededPlanId, states: ACTIVE_STATES });
		const reason = `Cancelled: plan ${planId} superseded plan ${supersededPlanId}.`;
		if (active.length) {
			await trx('field_tasks').whereIn('id', active.map((t) => t.id)).update({ state: 'cancelled', cancel_reason: reason, version: trx.raw('version + 1'), updated_at: trx.raw('CURRENT_TIMESTAMP(3)') });
			await recordAudit(trx, { organisationId: network.organisation_id, actorUserId: actorId, action: 'tasks.cancel', objectType: 'plan', objectId: supersededPlanId, before: { taskIds: active.map((t) => t.id) }, after: { state: 'cancelled', reason } });
			const perAssignee = new Map<number, number>();
			for (const t of active) if (t.assignee_id !== null) perAssignee.set(t.assignee_id, (perAssignee.get(t.assignee_id) ?? 0) + 1);
			for (const [userId, n] of perAssignee) {
				const u = await trx('users').select('email').where({ id: userId }).first();
				if (u) await enqueueMail(trx, fieldTasksCancelledMail(u.email, network.name, n, fieldUrl(origin, network.id)));
			}
		}
		cancelled = active.length;
	}
	await recordAudit(trx, { organisationId: network.organisation_id, actorUserId: actorId, action: 'tasks.create', objectType: 'plan', objectId: planId, after: { created: rows.length, moves: moves.length, cancelledFromPlan: supersededPlanId, cancelled } });
	return { created: rows.length, cancelled };
}

// ---------------------------------------------------------------- assignment

const lonLat = z.object({ lon: z.number().min(-180).max(180), lat: z.number().min(-90).max(90) }).strict();

export const assignInput = z.union([
	z.object({ taskIds: z.array(z.number().int().positive()).min(1, 'Choose at least one task.').max(5000), assigneeId: z.number().int().positive().nullable(), start: lonLat.optional() }).strict(),
	z.object({ spread: z.literal(true), assigneeIds: z.array(z.number().int().positive()).min(1, 'Choose at least one technician.').max(100), start: lonLat.optional() }).strict()
]);
export type AssignInput = z.infer<typeof assignInput>;

/** The people of the organisation who do field work (holders of task.work). */
export async function technicians(db: Db, organisationId: number): Promise<{ id: number; name: string; email: string }[]> {
	const rows = await db('memberships as m').join('users as u', 'u.id', 'm.user_id').select('u.id', 'u.name', 'u.email', 'm.role').where('m.organisation_id', organisationId).where('u.status', 'active').orderBy('u.name');
	return rows.filter((r: { role: Role }) => roleAllows(r.role, 'task.work')).map(({ id, name, email }: { id: number; name: string; email: string }) => ({ id, name, email }));
}

/** Splits items into `parts` contiguous stretches whose sizes differ by at most one. */
export function contiguousShares<T>(items: readonly T[], parts: number): T[][] {
	const out: T[][] = [];
	let start = 0;
	for (let k = 0; k < parts; k++) {
		const size = Math.floor(items.length / parts) + (k < items.length % parts ? 1 : 0);
		out.push(items.slice(start, start + size));
		start += size;
	}
	return out;
}

/** Assigns tasks of the current plan; returns the ids assigned per technician. */
export async function assignTasks(db: Knex, network: NetworkRef, actor: { id: number; name: string }, raw: unknown, origin: string): Promise<Map<number, number[]>> {
	const input = parseOr400(assignInput, raw);
	return db.transaction(async (trx) => {
		const plan = await trx('plans').select('id', 'revision_id').where({ network_id: network.id, state: 'current' }).forUpdate().first();
		if (!plan) throw new ServiceError(409, 'no_plan', 'This network has no approved plan, so it has no tasks to assign.');
		const people = new Map((await technicians(trx, network.organisation_id)).map((p) => [p.id, p]));
		const wanted = 'spread' in input ? input.assigneeIds : input.assigneeId === null ? [] : [input.assigneeId];
		for (const id of wanted) if (!people.has(id)) throw new ServiceError(400, 'not_technician', 'Tasks go to technicians of this organisation only.', 'assigneeId');

		const plan_tasks = await listTasks(trx, network.id, { planId: plan.id, states: ACTIVE_STATES });
		const byAssignee = new Map<number, number[]>();
		const touched = new Set<number>();
		if ('spread' in input) {
			// Unassigned tasks in the plan's route order (creation order), cut into stretches.
			const open = plan_tasks.filter((t) => t.assignee_id === null).sort((a, b) => a.id - b.id);
			if (open.length === 0) throw new ServiceError(409, 'nothing_to_assign', 'Every open task of the plan is already assigned.');
			contiguousShares(open, input.assigneeIds.length).forEach((share, k) => byAssignee.set(input.assigneeIds[k], share.map((t) => t.id)));
		} else {
			const known = new Map(plan_tasks.map((t) => [t.id, t]));
			for (const id of input.taskIds) if (!known.has(id)) throw new ServiceError(409, 'not_assignable', `Task ${id} is not an open task of the current plan.`, 'taskIds');
			for (const id of input.taskIds) {
				const prev = known.get(id)!.assignee_id;
				if (prev !== null) touched.add(prev);
			}
			if (input.assigneeId !== null) byAssignee.set(input.assigneeId, input.taskIds);
			else await trx('field_tasks').whereIn('id', input.taskIds).update({ assignee_id: null, route_order: null, version: trx.raw('version + 1'), updated_at: trx.raw('CURRENT_TIMESTAMP(3)') });
		}
		for (const [userId, ids] of byAssignee) {
			if (ids.length === 0) continue;
			await trx('field_tasks').whereIn('id', ids).update({ assignee_id: userId, version: trx.raw('version + 1'), updated_at: trx.raw('CURRENT_TIMESTAMP(3)') });
			touched.add(userId);
		}
		// Route order for everyone whose list changed.
		const rev = await trx('revisions').select('inputs').where({ id: plan.revision_id }).first();
		const inputs = (typeof rev.inputs === 'string' ? JSON.parse(rev.inputs) : rev.inputs) as RevisionInputs;
		const start: Point | null = input.start ? workingTransform(inputs).forward(input.start.lon, input.start.lat) : null;
		for (const userId of touched) await orderRoute(trx, network.id, plan.id, userId, start);

		await recordAudit(trx, { organisationId: network.organisation_id, actorUserId: actor.id, action: 'tasks.assign', objectType: 'plan', objectId: plan.id, after: { assignments: Object.fromEntries(byAssignee), start: input.start ?? null } });
		for (const [userId, ids] of byAssignee) {
			if (ids.length === 0 || userId === actor.id) continue;
			await enqueueMail(trx, fieldTasksAssignedMail(people.get(userId)!.email, network.name, actor.name, ids.length, fieldUrl(origin, network.id)));
		}
		return byAssignee;
	});
}

/**
 * Puts one technician's active tasks of a plan in the engine's route order. Tasks already done or
 * cancelled keep their relative order and come first (1..m); the active ones follow (m + 1, …), so
 * the list stays one sequence without gaps.
 */
async function orderRoute(trx: Knex.Transaction, networkId: number, planId: number, userId: number, start: Point | null): Promise<void> {
	const all = await listTasks(trx, networkId, { planId, assigneeId: userId });
	const active = all.filter((t) => ACTIVE_STATES.includes(t.state));
	// Finished ones first, in the order they had (listTasks sorts by route order), numbered 1..m.
	const finished = all.filter((t) => !ACTIVE_STATES.includes(t.state));
	for (let k = 0; k < finished.length; k++) if (finished[k].route_order !== k + 1) await trx('field_tasks').where({ id: finished[k].id }).update({ route_order: k + 1 });
	const after = finished.length;
	const { order } = routeOrder(start, active.map((t) => [Number(t.route_x), Number(t.route_y)] as Point));
	for (let k = 0; k < order.length; k++) await trx('field_tasks').where({ id: active[order[k]].id }).update({ route_order: after + k + 1 });
}

// ---------------------------------------------------------------- updates from the field

export const taskUpdateInput = z
	.object({
		state: z.enum(['open', 'started', 'done', 'blocked'], { error: 'The state is open, started, done or blocked.' }),
		position: z
			.object({
				lon: z.number({ error: 'Longitude is a number.' }).min(-180, 'Longitude lies between −180 and 180.').max(180, 'Longitude lies between −180 and 180.'),
				lat: z.number({ error: 'Latitude is a number.' }).min(-90, 'Latitude lies between −90 and 90.').max(90, 'Latitude lies between −90 and 90.'),
				accuracyM: z.number().min(0, 'Accuracy cannot be negative.').max(100_000).nullable().optional()
			})
			.strict()
			.optional(),
		note: z.string().trim().max(5000, 'Keep the note under 5000 characters.').optional(),
		reason: z.string().trim().max(2000, 'Keep the reason under 2000 characters.').optional(),
		/** The state the device saw when it made the change: a different current state is a conflict. */
		fromState: z.enum(['open', 'started', 'done', 'blocked', 'cancelled']).optional()
	})
	.strict();
export type TaskUpdateInput = z.infer<typeof taskUpdateInput>;

const ALLOWED: Record<TaskState, readonly TaskState[]> = {
	open: ['started', 'done', 'blocked'],
	started: ['started', 'done', 'blocked', 'open'],
	blocked: ['started', 'open', 'blocked'],
	done: [],
	cancelled: []
};

export interface TaskUpdateResult {
	status: 200 | 409;
	body: { task: TaskView; replayed?: boolean } | { error: { code: string; message: string }; task: TaskView };
}

const hashRequest = (taskId: number, body: TaskUpdateInput) => createHash('sha256').update(JSON.stringify({ taskId, ...body })).digest('hex');

const today = () => new Date().toISOString().slice(0, 10);

/**
 * One update from a technician's device. The same key again returns the stored answer (200 or
 * 409) and changes nothing; the same key with a different request is a 422.
 */
export async function applyTaskUpdate(db: Knex, network: NetworkRef & { install_tolerance_m?: number }, actor: { id: number }, taskId: number, key: string, raw: unknown): Promise<TaskUpdateResult> {
	if (!/^[\x21-\x7e]{8,200}$/.test(key)) throw new ServiceError(400, 'idempotency_key', 'Send an Idempotency-Key header of 8 to 200 visible characters (a UUID is good).');
	const input = parseOr400(taskUpdateInput, raw);
	const requestHash = hashRequest(taskId, input);
	const run = () =>
		db.transaction(async (trx): Promise<TaskUpdateResult> => {
			const task = await findTask(trx, network.id, taskId, { forUpdate: true });
			if (!task) throw new ServiceError(404, 'not_found', 'No such task.');
			if (task.assignee_id !== actor.id) throw new ServiceError(403, 'not_assignee', 'This task is assigned to someone else.');
			const seen = await findUpdateByKey(trx, network.id, key);
			if (seen) {
				if (seen.task_id !== taskId || seen.request_hash !== requestHash) throw new ServiceError(422, 'idempotency_key_reused', 'This Idempotency-Key was already used for a different update.');
				const body = seen.response as TaskUpdateResult['body'];
				return { status: seen.status as 200 | 409, body: 'task' in body && !('error' in body) ? { ...body, replayed: true } : body };
			}
			const record = async (status: 200 | 409, body: TaskUpdateResult['body']) => {
				await insertUpdate(trx, { network_id: network.id, task_id: taskId, idempotency_key: key, request_hash: requestHash, user_id: actor.id, from_state: task.state, to_state: input.state, status, response: body });
				return { status, body };
			};
			const conflict = (message: string) => record(409, { error: { code: 'conflict', message }, task: taskView(task) });
			if (input.fromState && input.fromState !== task.state) return conflict(`This task is ${task.state} now, not ${input.fromState} as this device saw it: nothing was changed.`);
			if (!ALLOWED[task.state].includes(input.state)) return conflict(task.state === 'done' ? 'This task is already done: nothing was changed.' : task.state === 'cancelled' ? `This task was cancelled (${task.cancel_reason ?? 'a newer plan'}): nothing was changed.` : `A task cannot go from ${task.state} to ${input.state}.`);

			const patch: Parameters<typeof updateTask>[2] = { state: input.state };
			if (input.note !== undefined) patch.note = input.note;
			if (input.state === 'blocked') {
				const reason = input.reason || input.note;
				if (!reason) throw new ServiceError(400, 'invalid_input', 'Say why the task is blocked.', 'reason');
				patch.blocked_reason = reason;
			} else patch.blocked_reason = null;
			if (input.state === 'done') await completeTask(trx, network, actor.id, task, input, patch);
			await updateTask(trx, task.id, patch);
			await recordAudit(trx, { organisationId: network.organisation_id, actorUserId: actor.id, action: `task.${input.state}`, objectType: 'task', objectId: task.id, before: { state: task.state }, after: { state: input.state, note: input.note ?? null, reason: patch.blocked_reason ?? null } });
			const after = await findTask(trx, network.id, task.id);
			return record(200, { task: taskView(after!) });
		});
	try {
		return await run();
	} catch (e) {
		// Two requests with one new key at the same moment: the loser's insert hits the unique key; replay.
		if ((e as { errno?: number }).errno === 1062) return run();
		throw e;
	}
}

/** Done: the inventory follows the field, and the offset from the target is measured and flagged. */
async function completeTask(trx: Knex.Transaction, network: NetworkRef & { install_tolerance_m?: number }, actorId: number, task: TaskRow, input: TaskUpdateInput, patch: Parameters<typeof updateTask>[2]): Promise<void> {
	patch.done_at = new Date();
	if (task.kind === 'remove') {
		if (task.sensor_id === null) return;
		const s = await findSensor(trx, network.id, task.sensor_id, { forUpdate: true });
		if (!s) return;
		await updateSensor(trx, network.id, s.id, s.version, { code: s.code, serial: s.serial, sensor_type_id: s.sensor_type_id, lon: s.lon, lat: s.lat, status: 'retired', installed_on: s.installed_on, notes: s.notes });
		await recordAudit(trx, { organisationId: network.organisation_id, actorUserId: actorId, action: 'sensor.remove', objectType: 'sensor', objectId: s.id, before: { status: s.status }, after: { status: 'retired', taskId: task.id } });
		return;
	}
	if (!input.position) throw new ServiceError(400, 'invalid_input', 'Record the as-installed position (from GPS or typed in) to finish this task.', 'position');
	const { lon, lat } = input.position;
	const accuracy = input.position.accuracyM ?? null;
	const offset = geodesicDistanceBearing(Number(task.target_lon), Number(task.target_lat), lon, lat).distanceM;
	const tolerance = Number(network.install_tolerance_m ?? (await trx('networks').select('install_tolerance_m').where({ id: network.id }).first())?.install_tolerance_m ?? 10);
	Object.assign(patch, { installed_lon: lon, installed_lat: lat, installed_accuracy_m: accuracy, offset_m: offset, offset_flagged: offset > tolerance });
	const position = { lon, lat, accuracyM: accuracy, offsetM: offset, taskId: task.id };
	if (task.kind === 'move' && task.sensor_id !== null) {
		const s = await findSensor(trx, network.id, task.sensor_id, { forUpdate: true });
		if (s) {
			await updateSensor(trx, network.id, s.id, s.version, { code: s.code, serial: s.serial, sensor_type_id: s.sensor_type_id, lon, lat, status: s.status, installed_on: today(), notes: s.notes });
			await recordAudit(trx, { organisationId: network.organisation_id, actorUserId: actorId, action: 'sensor.as-installed', objectType: 'sensor', objectId: s.id, before: { lon: s.lon, lat: s.lat }, after: position });
			return;
		}
	}
	// An installation (or a move whose sensor left the inventory): a new sensor at the as-installed position.
	if (task.sensor_type_id === null) throw new ServiceError(409, 'no_type', 'The plan gives no sensor type for this site; ask the analyst to add the sensor.');
	let code = task.sensor_code;
	for (let n = 2; await findSensorByCode(trx, network.id, code); n++) code = `${task.sensor_code}-${n}`;
	const id = await insertSensor(trx, network.id, { code, serial: '', sensor_type_id: task.sensor_type_id, lon, lat, status: 'active', installed_on: today(), notes: '' });
	patch.sensor_id = id;
	patch.sensor_code = code;
	await recordAudit(trx, { organisationId: network.organisation_id, actorUserId: actorId, action: 'sensor.as-installed', objectType: 'sensor', objectId: id, before: null, after: { ...position, code } });
}

/**
 * Whose tasks a list shows, from `?assignee=`: "me", a user id, or nothing (everyone's). A
 * technician sees their own only; others with task.view see anyone's.
 */
export function resolveAssignee(param: string | null, actor: { id: number }, role: Role): number | undefined {
	const own = roleAllows(role, 'task.work') && !roleAllows(role, 'task.assign');
	if (param === 'me') return actor.id;
	if (own && (param === null || Number(param) !== actor.id)) throw new ServiceError(403, 'forbidden', 'Technicians see their own tasks: ask for ?assignee=me.');
	if (param === null || param === '') return undefined;
	if (!/^\d+$/.test(param)) throw new ServiceError(400, 'invalid_input', 'assignee is "me" or a user id.', 'assignee');
	return Number(param);
}

/** A technician's route as GPX 1.1: the active tasks as waypoints in route order. */
export function tasksGpx(networkName: string, who: string | null, tasks: readonly TaskView[], now = new Date()): string {
	const active = tasks.filter((t) => t.state === 'open' || t.state === 'started' || t.state === 'blocked');
	const words = { move: 'Move', install: 'Install', remove: 'Remove' } as const;
	const points = active.map((t, i) => {
		const parts = [`${words[t.kind]} ${t.sensorCode}`];
		if (t.from) parts.push(`from ${t.from.lat.toFixed(6)}, ${t.from.lon.toFixed(6)}`);
		parts.push(`${t.kind === 'remove' ? 'at' : 'to'} ${t.target.lat.toFixed(6)}, ${t.target.lon.toFixed(6)}`);
		if (t.distanceM !== null && t.bearingDeg !== null) parts.push(`${Math.round(t.distanceM)} m at ${Math.round(t.bearingDeg)}°`);
		parts.push(`state ${t.state}${t.blockedReason ? ` (${t.blockedReason})` : ''}`);
		return { lon: t.target.lon, lat: t.target.lat, name: `${t.order ?? i + 1}. ${words[t.kind]} ${t.sensorCode}`, desc: parts.join('; '), sym: 'Flag', type: t.kind };
	});
	return routeGpx({ name: `${networkName}: ${who ? `route of ${who}` : 'field tasks'}`, desc: 'Field tasks in route order. Check the field cautions before the first task of the day.', creator: 'Cairnfield', time: now, points });
}

// ---------------------------------------------------------------- per-network settings

export const fieldSettingsInput = z
	.object({
		installToleranceM: z.coerce.number({ error: 'The tolerance is a number of metres.' }).min(0.5, 'Use a tolerance of at least 0.5 m.').max(1000, 'Use a tolerance of at most 1000 m.'),
		publicGridM: z.preprocess((v) => (v === '' || v === null || v === undefined ? null : v), z.coerce.number({ error: 'The grid is a number of metres.' }).min(10, 'Use a grid of at least 10 m, or leave it empty.').max(100_000, 'Use a grid of at most 100 km.').nullable())
	})
	.strict();

export async function fieldSettings(db: Db, networkId: number): Promise<{ installToleranceM: number; publicGridM: number | null }> {
	const row = await db('networks').select('install_tolerance_m', 'public_grid_m').where({ id: networkId }).first();
	return { installToleranceM: Number(row.install_tolerance_m), publicGridM: row.public_grid_m === null ? null : Number(row.public_grid_m) };
}

/** The installation tolerance and the public map's generalisation grid, with an audit entry. */
export async function updateFieldSettings(db: Knex, network: NetworkRef, actorId: number, raw: unknown): Promise<void> {
	const settings = parseOr400(fieldSettingsInput, raw);
	await db.transaction(async (trx) => {
		const before = await fieldSettings(trx, network.id);
		await trx('networks').where({ id: network.id }).update({ install_tolerance_m: settings.installToleranceM, public_grid_m: settings.publicGridM });
		await recordAudit(trx, { organisationId: network.organisation_id, actorUserId: actorId, action: 'network.field-settings', objectType: 'network', objectId: network.id, before, after: settings });
	});
}
