/**
 * Field tasks in the services, on a network built from the demo files: approval makes the tasks in
 * its transaction; assignment orders each technician's route and e-mails them; updates are
 * idempotent and never overwrite a newer state; done moves the inventory with an audit entry; a
 * newer plan cancels the open tasks of the one it supersedes.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import geodesic from 'geographiclib-geodesic';
import { closeThreadPools } from '../../src/lib/server/jobs';
import { createProposal } from '../../src/lib/server/services/proposals';
import { runNow } from '../../src/lib/server/services/runs';
import { currentPlanView, decideRevision, submitRevision } from '../../src/lib/server/services/reviews';
import { applyTaskUpdate, assignTasks, currentTasks, contiguousShares, tasksGpx, type TaskView } from '../../src/lib/server/services/field-tasks';
import { findSensor } from '../../src/lib/server/repositories/sensors';
import { createTestDatabase, jsonValue, makeMember, type TestDb } from '../helpers/db';
import { cachedPublicMap, generalise, publicImportancePng, publicMap } from '../../src/lib/server/services/public-map';
import { networkImportance } from '../../src/lib/server/services/importance';
import type { ImportanceSource } from '../../src/lib/server/services/map-data';
import { networkRecipeVersionId } from '../../src/lib/server/repositories/recipes';
import { placementNetwork, type PlacementNetwork } from '../helpers/placement-network';
import { fsTestStore, type TestStore } from './layers-support';
import { checkGpx } from '../helpers/gpx-rules';
import { PNG } from 'pngjs';
import { addTaskPhoto, photosOfTasks, readTaskPhoto } from '../../src/lib/server/services/field-photos';
import { acknowledgeCautions, cautionsAcknowledged } from '../../src/lib/server/services/field-cautions';

/**
 * The headers of a baseline JPEG of `w` × `h` pixels: SOI, a JFIF APP0 segment (JFIF 1.02), a SOF0
 * frame header with three components (ITU-T T.81, B.2.2) and EOI. Enough for a reader of the
 * header; no scan data.
 */
function jpegHeader(w: number, h: number): Uint8Array {
	const app0 = [0xff, 0xe0, 0x00, 0x10, 0x4a, 0x46, 0x49, 0x46, 0x00, 0x01, 0x02, 0x00, 0x00, 0x01, 0x00, 0x01, 0x00, 0x00];
	const sof0 = [0xff, 0xc0, 0x00, 0x11, 0x08, h >> 8, h & 0xff, w >> 8, w & 0xff, 0x03, 0x01, 0x22, 0x00, 0x02, 0x11, 0x01, 0x03, 0x11, 0x01];
	return Uint8Array.from([0xff, 0xd8, ...app0, ...sof0, 0xff, 0xd9]);
}

const ORIGIN = 'https://cairnfield.example.org';
const KIND_WORDS = { move: 'Move', install: 'Install', remove: 'Remove' } as const;
const R = 6_371_008.8; // mean Earth radius (IUGG), m

/** Spherical initial bearing, degrees (the standard spherical-trigonometry formula; common practice, no source). */
function sphericalBearing(lon1: number, lat1: number, lon2: number, lat2: number): number {
	const [p1, p2, dl] = [lat1, lat2, lon2 - lon1].map((d) => (d * Math.PI) / 180);
	const y = Math.sin(dl) * Math.cos(p2);
	const x = Math.cos(p1) * Math.sin(p2) - Math.sin(p1) * Math.cos(p2) * Math.cos(dl);
	return ((Math.atan2(y, x) * 180) / Math.PI + 360) % 360;
}
/** Haversine distance (R. W. Sinnott, "Virtues of the Haversine", Sky & Telescope 68(2), 1984). */
function haversine(lon1: number, lat1: number, lon2: number, lat2: number): number {
	const [p1, p2, dp, dl] = [lat1, lat2, lat2 - lat1, lon2 - lon1].map((d) => (d * Math.PI) / 180);
	const a = Math.sin(dp / 2) ** 2 + Math.cos(p1) * Math.cos(p2) * Math.sin(dl / 2) ** 2;
	return 2 * R * Math.asin(Math.sqrt(a));
}
/** A point `m` metres due north of lon/lat (GeographicLib's direct problem, a library we did not write). */
function north(lon: number, lat: number, m: number): { lon: number; lat: number } {
	const r = geodesic.Geodesic.WGS84.Direct(lat, lon, 0, m);
	return { lon: r.lon2!, lat: r.lat2! };
}

describe('field tasks', () => {
	let t: TestDb;
	let s: TestStore;
	let net: PlacementNetwork;
	let analyst: { id: number; name: string };
	let reviewer: { id: number; name: string };
	let techA: { id: number; name: string; email: string };
	let techB: { id: number; name: string; email: string };
	let proposalId: number;
	let revision: { moves: number; installations: number; removals: number };

	async function approveNew(addCount: number): Promise<number> {
		const rev = await runNow(t.db, s.store, net.network, analyst.id, proposalId, { strategy: 'lloyd', maxIterations: 30, addCount });
		await submitRevision(t.db, net.network, analyst, rev, {}, ORIGIN);
		const { planId } = await decideRevision(t.db, net.network, reviewer, rev, { decision: 'approve', comment: 'Go.' }, ORIGIN);
		return planId!;
	}

	beforeAll(async () => {
		t = await createTestDatabase();
		s = await fsTestStore();
		const a = await makeMember(t.db, 'analyst');
		analyst = { id: a.userId, name: 'Test analyst' };
		const r = await makeMember(t.db, 'reviewer', a.organisationId);
		reviewer = { id: r.userId, name: 'Test reviewer' };
		const ta = await makeMember(t.db, 'technician', a.organisationId);
		const tb = await makeMember(t.db, 'technician', a.organisationId);
		techA = { id: ta.userId, name: 'Test technician', email: ta.email };
		techB = { id: tb.userId, name: 'Test technician', email: tb.email };
		net = await placementNetwork(t.db, s.store, a.organisationId, a.userId, 'Field check');
		proposalId = await createProposal(t.db, net.network, analyst.id, { title: 'Field work' });
	}, 120_000);
	afterAll(async () => {
		await closeThreadPools();
		await s?.close();
		await t?.drop();
	});

	it('approval creates one task per move, installation and removal, with geodesic distance and bearing', async () => {
		const planId = await approveNew(2);
		const rev = await t.db('revisions').select('metrics').join('plans', 'plans.revision_id', 'revisions.id').where('plans.id', planId).first();
		const m = typeof rev.metrics === 'string' ? JSON.parse(rev.metrics) : rev.metrics;
		revision = { moves: m.moves, installations: m.installations, removals: m.removals };
		const tasks = await currentTasks(t.db, net.network.id);
		expect(tasks.filter((x) => x.kind === 'move')).toHaveLength(revision.moves);
		expect(tasks.filter((x) => x.kind === 'install')).toHaveLength(2);
		expect(tasks.filter((x) => x.kind === 'remove')).toHaveLength(revision.removals);
		expect(tasks.every((x) => x.state === 'open' && x.planId === planId && x.assignee === null)).toBe(true);
		for (const task of tasks.filter((x) => x.kind === 'move')) {
			expect(task.sensorId).toBeGreaterThan(0);
			// The ellipsoid and the sphere agree within 0.5 % in distance and 0.5° in bearing over a few km.
			const h = haversine(task.from!.lon, task.from!.lat, task.target.lon, task.target.lat);
			expect(Math.abs(task.distanceM! - h) / h).toBeLessThan(0.005);
			const db = Math.abs(task.bearingDeg! - sphericalBearing(task.from!.lon, task.from!.lat, task.target.lon, task.target.lat));
			expect(Math.min(db, 360 - db)).toBeLessThan(0.5);
		}
		const audit = await t.db('audit_log').where({ action: 'tasks.create', object_id: String(planId) });
		expect(audit).toHaveLength(1);
	}, 120_000);

	it('contiguousShares cuts a route into stretches whose sizes differ by at most one', () => {
		expect(contiguousShares([1, 2, 3, 4, 5], 2)).toEqual([[1, 2, 3], [4, 5]]);
		expect(contiguousShares([1], 3)).toEqual([[1], [], []]);
	});

	it('spreading assigns every task, orders each route 1..n and e-mails each technician a link from the origin', async () => {
		const before = await t.db('outbox_messages').max({ id: 'id' }).first();
		const tasks = await currentTasks(t.db, net.network.id);
		await assignTasks(t.db, net.network, analyst, { spread: true, assigneeIds: [techA.id, techB.id], start: tasks[0].target }, ORIGIN);
		const after = await currentTasks(t.db, net.network.id);
		expect(after.every((x) => x.assignee !== null)).toBe(true);
		for (const tech of [techA, techB]) {
			const mine = after.filter((x) => x.assignee!.id === tech.id);
			expect(mine.map((x) => x.order)).toEqual(mine.map((_, i) => i + 1));
			const mail = await t.db('outbox_messages').where('id', '>', before!.id ?? 0).where({ to_address: tech.email });
			expect(mail).toHaveLength(1);
			expect(mail[0].text_body).toContain(`${ORIGIN}/networks/${net.network.id}/field`);
			expect(mail[0].subject).toContain(`${mine.length} assigned`);
			// The GPX export lists the same route, in the same order, and meets GPX 1.1's structural rules.
			const gpx = checkGpx(tasksGpx('Field check', tech.name, mine));
			expect(gpx.broken).toEqual([]);
			expect(gpx.waypoints.map((w) => w.name)).toEqual(mine.map((x) => `${x.order}. ${KIND_WORDS[x.kind]} ${x.sensorCode}`));
			expect(gpx.waypoints.map((w) => [w.lon, w.lat])).toEqual(mine.map((x) => [Number(x.target.lon.toFixed(9)), Number(x.target.lat.toFixed(9))]));
		}
		// Nobody else may be given tasks.
		await expect(assignTasks(t.db, net.network, analyst, { taskIds: [after[0].id], assigneeId: analyst.id }, ORIGIN)).rejects.toMatchObject({ status: 400, code: 'not_technician' });
	});

	it('an update with the same key applies once and answers the same; a reused key with another body is refused', async () => {
		const [task] = (await currentTasks(t.db, net.network.id, { assigneeId: techA.id })).filter((x) => x.kind === 'move');
		const first = await applyTaskUpdate(t.db, net.network, techA, task.id, 'key-start-0001', { state: 'started', fromState: 'open' });
		expect(first.status).toBe(200);
		const again = await applyTaskUpdate(t.db, net.network, techA, task.id, 'key-start-0001', { state: 'started', fromState: 'open' });
		expect(again.status).toBe(200);
		expect(again.body).toMatchObject({ replayed: true, task: { state: 'started', version: (first.body as { task: TaskView }).task.version } });
		expect(await t.db('field_task_updates').where({ task_id: task.id })).toHaveLength(1);
		await expect(applyTaskUpdate(t.db, net.network, techA, task.id, 'key-start-0001', { state: 'blocked', reason: 'x' })).rejects.toMatchObject({ status: 422 });
		await expect(applyTaskUpdate(t.db, net.network, techB, task.id, 'key-other-0001', { state: 'started' })).rejects.toMatchObject({ status: 403 });
		await expect(applyTaskUpdate(t.db, net.network, techA, task.id, 'short', { state: 'started' })).rejects.toMatchObject({ status: 400 });
	});

	it('done moves the sensor to the as-installed position with an audit entry; a second device is told of the conflict', async () => {
		const [task] = (await currentTasks(t.db, net.network.id, { assigneeId: techA.id })).filter((x) => x.kind === 'move' && x.state === 'started');
		await expect(applyTaskUpdate(t.db, net.network, techA, task.id, 'key-done-nopos', { state: 'done' })).rejects.toMatchObject({ status: 400, field: 'position' });
		const at = north(task.target.lon, task.target.lat, 3);
		const done = await applyTaskUpdate(t.db, net.network, techA, task.id, 'key-done-0001', { state: 'done', fromState: 'started', position: { ...at, accuracyM: 4 }, note: 'Set at the fence post.' });
		expect(done.status).toBe(200);
		const view = (done.body as { task: TaskView }).task;
		expect(view.offsetM!).toBeCloseTo(3, 3); // 3 m north by GeographicLib's direct problem
		expect(view.offsetFlagged).toBe(false); // default tolerance 10 m
		const sensor = await findSensor(t.db, net.network.id, task.sensorId!);
		expect(sensor!.lon).toBeCloseTo(at.lon, 9);
		expect(sensor!.lat).toBeCloseTo(at.lat, 9);
		const pt = await t.db('sensors').select(t.db.raw('ST_X(position) as x, ST_Y(position) as y')).where({ id: task.sensorId }).first();
		expect(pt.x).toBeCloseTo(at.lon, 9);
		expect(await t.db('audit_log').where({ action: 'sensor.as-installed', object_id: String(task.sensorId) })).toHaveLength(1);

		// A second device that still saw the task open starts it: 409, nothing changes, the replay is the same 409.
		const stale = await applyTaskUpdate(t.db, net.network, techA, task.id, 'key-device-b-01', { state: 'started', fromState: 'open' });
		expect(stale.status).toBe(409);
		expect(stale.body).toMatchObject({ error: { code: 'conflict' }, task: { state: 'done' } });
		const replay = await applyTaskUpdate(t.db, net.network, techA, task.id, 'key-device-b-01', { state: 'started', fromState: 'open' });
		expect(replay).toEqual(stale);
		const blocked = await applyTaskUpdate(t.db, net.network, techA, task.id, 'key-device-b-02', { state: 'blocked', reason: 'Gate locked' });
		expect(blocked.status).toBe(409);
		expect((await findSensor(t.db, net.network.id, task.sensorId!))!.lon).toBeCloseTo(at.lon, 9);

		// Re-assigning reorders the open tasks after the done ones: the route stays one sequence 1..n.
		const route = await currentTasks(t.db, net.network.id, { assigneeId: techA.id });
		const open = route.find((x) => x.state === 'open')!;
		await assignTasks(t.db, net.network, analyst, { taskIds: [open.id], assigneeId: techA.id }, ORIGIN);
		const again = await currentTasks(t.db, net.network.id, { assigneeId: techA.id });
		expect(again.map((x) => x.order)).toEqual(again.map((_, i) => i + 1));
		expect(again.filter((x) => x.state === 'done').map((x) => x.order)).toEqual(again.filter((x) => x.state === 'done').map((_, i) => i + 1));
	});

	it('an installation far from its target adds the sensor and is flagged; blocked needs a reason', async () => {
		const mine = await currentTasks(t.db, net.network.id);
		const install = mine.find((x) => x.kind === 'install')!;
		const tech = install.assignee!.id === techA.id ? techA : techB;
		const at = north(install.target.lon, install.target.lat, 25);
		const r = await applyTaskUpdate(t.db, net.network, tech, install.id, 'key-install-01', { state: 'done', position: at });
		const view = (r.body as { task: TaskView }).task;
		expect(view.offsetFlagged).toBe(true);
		expect(view.sensorId).toBeGreaterThan(0);
		expect((await findSensor(t.db, net.network.id, view.sensorId!))!.code).toBe(view.sensorCode);

		const other = mine.find((x) => x.state === 'open' && x.assignee!.id === tech.id && x.id !== install.id)!;
		await expect(applyTaskUpdate(t.db, net.network, tech, other.id, 'key-block-00', { state: 'blocked' })).rejects.toMatchObject({ status: 400, field: 'reason' });
		const b = await applyTaskUpdate(t.db, net.network, tech, other.id, 'key-block-01', { state: 'blocked', reason: 'Flooded ford' });
		expect((b.body as { task: TaskView }).task).toMatchObject({ state: 'blocked', blockedReason: 'Flooded ford' });
	});

	it('photos: JPEG and PNG by content, stored with a row and an audit entry; others refused leaving nothing; a repeated key stores once; private to the task', async () => {
		const [task] = (await currentTasks(t.db, net.network.id, { assigneeId: techA.id })).filter((x) => x.state !== 'cancelled');
		const keysBefore = (await s.keys()).length;
		// A 3 × 2 PNG written by pngjs (a library we did not write): its IHDR gives the size.
		const png = new PNG({ width: 3, height: 2 });
		png.data.fill(200);
		const pngBytes = new Uint8Array(PNG.sync.write(png));
		const a = await addTaskPhoto(t.db, s.store, net.network, techA, task.id, pngBytes, 'photo-key-0001');
		expect(a.replayed).toBe(false);
		expect(a.photo).toMatchObject({ taskId: task.id, contentType: 'image/png', width: 3, height: 2, bytes: pngBytes.byteLength });
		const b = await addTaskPhoto(t.db, s.store, net.network, techA, task.id, jpegHeader(1600, 1200), null);
		expect(b.photo).toMatchObject({ contentType: 'image/jpeg', width: 1600, height: 1200 });
		// The same key again: the first photo, nothing stored twice.
		const again = await addTaskPhoto(t.db, s.store, net.network, techA, task.id, pngBytes, 'photo-key-0001');
		expect(again).toMatchObject({ replayed: true, photo: { id: a.photo.id } });
		expect((await s.keys()).length).toBe(keysBefore + 2);
		const audits = await t.db('audit_log').where({ action: 'task.photo', object_id: task.id });
		expect(audits).toHaveLength(2);

		// GIF (signature "GIF89a", GIF89a specification §17) and text that claims nothing: refused, nothing left.
		const rowsBefore = await t.db('field_task_photos').count({ n: '*' }).first();
		const gif = Uint8Array.from([0x47, 0x49, 0x46, 0x38, 0x39, 0x61, 1, 0, 1, 0, 0x80, 0, 0, 0, 0, 0, 0xff, 0xff, 0xff, 0x21, 0xf9, 4, 1, 0, 0, 0, 0, 0x2c, 0, 0, 0, 0, 1, 0, 1, 0, 0, 2, 2, 0x44, 1, 0, 0x3b]);
		for (const bad of [gif, new TextEncoder().encode('<html><script>alert(1)</script></html>')]) {
			await expect(addTaskPhoto(t.db, s.store, net.network, techA, task.id, bad, null)).rejects.toMatchObject({ status: 415, code: 'unsupported_image' });
		}
		await expect(addTaskPhoto(t.db, s.store, net.network, techA, task.id, new Uint8Array(), null)).rejects.toMatchObject({ status: 400 });
		expect(await t.db('field_task_photos').count({ n: '*' }).first()).toEqual(rowsBefore);
		expect((await s.keys()).length).toBe(keysBefore + 2);

		// Only the assignee adds; the key of another task's photo is refused.
		await expect(addTaskPhoto(t.db, s.store, net.network, techB, task.id, pngBytes, null)).rejects.toMatchObject({ status: 403 });
		const [other] = await currentTasks(t.db, net.network.id, { assigneeId: techA.id }).then((l) => l.filter((x) => x.id !== task.id));
		if (other) await expect(addTaskPhoto(t.db, s.store, net.network, techA, other.id, pngBytes, 'photo-key-0001')).rejects.toMatchObject({ status: 422 });

		// Reading: the bytes as sent, for the assignee and the analyst; another technician gets 404.
		const got = await readTaskPhoto(t.db, s.store, net.network.id, task.id, a.photo.id, { id: techA.id, ownTasksOnly: true });
		expect(new Uint8Array(got.body)).toEqual(pngBytes);
		expect(got.contentType).toBe('image/png');
		expect((await readTaskPhoto(t.db, s.store, net.network.id, task.id, b.photo.id, { id: analyst.id, ownTasksOnly: false })).contentType).toBe('image/jpeg');
		await expect(readTaskPhoto(t.db, s.store, net.network.id, task.id, a.photo.id, { id: techB.id, ownTasksOnly: true })).rejects.toMatchObject({ status: 404 });
		const listed = await photosOfTasks(t.db, net.network.id, [task.id]);
		expect(listed[task.id].map((p) => p.id)).toEqual([a.photo.id, b.photo.id]);
	});

	it('a photo queued offline and sent again under its key (twice at once, then after the task moved on) is stored once and answers the first photo; other bytes under the key are refused', async () => {
		const task = (await currentTasks(t.db, net.network.id, { assigneeId: techA.id })).find((x) => x.state === 'open')!;
		expect(task).toBeTruthy();
		const png = new PNG({ width: 4, height: 3 });
		png.data.fill(90);
		const bytes = new Uint8Array(PNG.sync.write(png));
		const rowsBefore = Number((await t.db('field_task_photos').count({ n: '*' }).first())!.n);
		const keysBefore = (await s.keys()).length;
		// The queue's first try lost its answer and a second tab sent it too: both arrive at once.
		const [x, y] = await Promise.all([
			addTaskPhoto(t.db, s.store, net.network, techA, task.id, bytes, 'queued-photo-0001'),
			addTaskPhoto(t.db, s.store, net.network, techA, task.id, bytes, 'queued-photo-0001')
		]);
		expect(x.photo.id).toBe(y.photo.id);
		expect([x.replayed, y.replayed].sort()).toEqual([false, true]);
		// The task moves on (blocked); the queue sends the photo once more: the same first answer.
		await applyTaskUpdate(t.db, net.network, techA, task.id, 'queued-photo-block', { state: 'blocked', reason: 'Gate locked' });
		const z = await addTaskPhoto(t.db, s.store, net.network, techA, task.id, bytes, 'queued-photo-0001');
		expect(z).toEqual({ photo: x.photo, replayed: true });
		// Another photo under the same key is not the same request.
		const other = new PNG({ width: 4, height: 3 });
		other.data.fill(10);
		await expect(addTaskPhoto(t.db, s.store, net.network, techA, task.id, new Uint8Array(PNG.sync.write(other)), 'queued-photo-0001')).rejects.toMatchObject({ status: 422, code: 'idempotency_key_reused' });
		// Stored once: one row, one object, one audit entry.
		expect(Number((await t.db('field_task_photos').count({ n: '*' }).first())!.n)).toBe(rowsBefore + 1);
		expect((await s.keys()).length).toBe(keysBefore + 1);
		expect(await t.db('audit_log').where({ action: 'task.photo', object_id: task.id }).whereRaw("JSON_VALUE(`after`, '$.photoId') = ?", [String(x.photo.id)])).toHaveLength(1);
	});

	it('cautions: one acknowledgement per technician, network and UTC day, with an audit entry; a late-sent one counts for its own day; bad dates refused', async () => {
		const now = new Date('2026-12-02T09:30:00Z');
		const first = await acknowledgeCautions(t.db, net.network, techA, { acknowledgedAt: '2026-12-02T07:15:00+01:00' }, now);
		expect(first).toEqual({ replayed: false, acknowledgement: { networkId: net.network.id, day: '2026-12-02', acknowledgedAt: '2026-12-02T06:15:00.000Z' } });
		// Again the same day (another device, a re-sent queue): the first one, nothing written twice.
		expect(await acknowledgeCautions(t.db, net.network, techA, {}, now)).toEqual({ ...first, replayed: true });
		const [both] = await Promise.all([acknowledgeCautions(t.db, net.network, techB, {}, now), acknowledgeCautions(t.db, net.network, techB, {}, now)]);
		expect(both.acknowledgement.day).toBe('2026-12-02');
		expect(await t.db('field_caution_acknowledgements').where({ network_id: net.network.id, day: '2026-12-02' })).toHaveLength(2);
		expect(await t.db('audit_log').where({ action: 'cautions.acknowledge', object_id: net.network.id, actor_user_id: techA.id })).toHaveLength(1);
		expect(await t.db('audit_log').where({ action: 'cautions.acknowledge', object_id: net.network.id, actor_user_id: techB.id })).toHaveLength(1);
		// Read offline late on 1 December (UTC), sent the next morning: it counts for the 1st, not today.
		const late = await acknowledgeCautions(t.db, net.network, techA, { acknowledgedAt: '2026-12-01T23:50:00Z' }, now);
		expect(late.acknowledgement.day).toBe('2026-12-01');
		expect(await cautionsAcknowledged(t.db, net.network.id, techA.id, '2026-12-01')).toBe(true);
		expect(await cautionsAcknowledged(t.db, net.network.id, techA.id, '2026-12-03')).toBe(false);
		// A moment in the future (a wrong clock), more than a week old, or not a date: refused, nothing written.
		const rows = (await t.db('field_caution_acknowledgements').count({ n: '*' }).first())!.n;
		await expect(acknowledgeCautions(t.db, net.network, techA, { acknowledgedAt: '2026-12-02T10:00:00Z' }, now)).rejects.toMatchObject({ status: 400, field: 'acknowledgedAt' });
		await expect(acknowledgeCautions(t.db, net.network, techA, { acknowledgedAt: '2026-11-20T10:00:00Z' }, now)).rejects.toMatchObject({ status: 422, code: 'too_old' });
		await expect(acknowledgeCautions(t.db, net.network, techA, { acknowledgedAt: 'this morning' }, now)).rejects.toMatchObject({ status: 400 });
		await expect(acknowledgeCautions(t.db, net.network, techA, { userId: techB.id }, now)).rejects.toMatchObject({ status: 400 });
		expect((await t.db('field_caution_acknowledgements').count({ n: '*' }).first())!.n).toBe(rows);
	});

	it('a newer approved plan cancels the open tasks of the one it supersedes, says why, and tells the technicians', async () => {
		const old = await currentTasks(t.db, net.network.id);
		const oldPlan = old[0].planId;
		const before = await t.db('outbox_messages').max({ id: 'id' }).first();
		const planId = await approveNew(0);
		const rows = await t.db('field_tasks').where({ plan_id: oldPlan });
		for (const row of rows) {
			const was = old.find((x) => x.id === row.id)!;
			if (was.state === 'done') expect(row.state).toBe('done');
			else {
				expect(row.state).toBe('cancelled');
				expect(row.cancel_reason).toContain(`plan ${planId}`);
			}
		}
		const mail = await t.db('outbox_messages').where('id', '>', before!.id ?? 0).where('subject', 'like', '%cancelled%');
		expect(mail.map((m) => m.to_address).sort()).toEqual([techA.email, techB.email].sort());
		expect((await currentTasks(t.db, net.network.id)).every((x) => x.planId === planId)).toBe(true);
	}, 120_000);

	it('the public map: 404 until published, then only public fields; positions generalised to grid centres on request', async () => {
		const importance: ImportanceSource = {
			versionId: (id) => networkRecipeVersionId(t.db, id),
			surface: async (id) => {
				const v = await networkImportance(t.db, s.store, id);
				return v ? { grid: v.grid, data: v.band.data } : null;
			}
		};
		const slug = net.network.slug;
		await expect(publicMap(t.db, slug, importance)).rejects.toMatchObject({ status: 404 });
		await expect(publicMap(t.db, 'no-such-network', importance)).rejects.toMatchObject({ status: 404 });
		await t.db('networks').where({ id: net.network.id }).update({ publication: 'published', public_text: 'Soil moisture in the Vale.' });
		const m = await publicMap(t.db, slug, importance);
		const plan = await currentPlanView(t.db, net.network.id);
		expect(m.plan).toEqual({ approvedAt: plan!.approvedAt });
		expect(m.network).toEqual({ slug, name: net.network.name, publicText: 'Soil moisture in the Vale.' });
		const revision = await t.db('revisions').select('outputs').where({ id: plan!.revisionId }).first();
		const targets = (jsonValue(revision.outputs) as { targets: { features: unknown[] } }).targets.features;
		expect(m.sites).toHaveLength(targets.length);
		expect(m.importance?.url).toBe(`/api/v1/public/networks/${slug}/importance.png`);
		expect(await publicImportancePng(t.db, slug, importance)).toBeInstanceOf(Buffer);
		// Neutron sensors (footprint radius about 130–240 m, Köhli et al. 2015) are large-footprint
		// sensors with their own symbol; the probes of the demo (a 30 m siting radius) are point probes.
		expect(m.sensorTypes.length).toBeGreaterThan(0);
		for (const type of m.sensorTypes) expect([type.name, type.footprint]).toEqual([type.name, /neutron/.test(type.name) ? 'area' : 'point']);
		for (const site of m.sites) expect(site.footprint).toBe(m.sensorTypes.find((x) => x.name === site.type)!.footprint);

		// Built once while nothing changes: the same object; a change of what it shows is seen at once.
		const cached = await cachedPublicMap(t.db, slug, importance);
		expect(cached).toEqual(m);
		expect(await cachedPublicMap(t.db, slug, importance)).toBe(cached);
		const done = await t.db('field_tasks').select('id', 'installed_lon', 'installed_lat').where({ network_id: net.network.id, state: 'done' }).whereNotNull('installed_lon').first();
		if (done) {
			await t.db('field_tasks').where({ id: done.id }).update({ installed_lon: Number(done.installed_lon) + 0.0001 });
			expect(await cachedPublicMap(t.db, slug, importance)).not.toBe(cached);
			await t.db('field_tasks').where({ id: done.id }).update({ installed_lon: done.installed_lon });
		}
		await t.db('networks').where({ id: net.network.id }).update({ public_text: 'Soil moisture in the Vale, updated.' });
		expect((await cachedPublicMap(t.db, slug, importance)).network.publicText).toBe('Soil moisture in the Vale, updated.');
		await t.db('networks').where({ id: net.network.id }).update({ public_text: 'Soil moisture in the Vale.' });

		// Nothing private: no serial, sensor code, e-mail address, person, note or task field.
		const text = JSON.stringify(m);
		const sensors = await t.db('sensors').select('code', 'serial', 'notes').where({ network_id: net.network.id });
		for (const x of sensors) {
			if (x.serial) expect(text).not.toContain(x.serial);
			expect(text).not.toContain(`"${x.code}"`);
		}
		for (const u of await t.db('users').select('email', 'name')) {
			expect(text).not.toContain(u.email);
		}
		for (const word of ['assignee', 'serial', 'note', 'Flooded ford', 'Set at the fence post', 'author', 'email']) expect(text).not.toContain(word);
		// Nor any photo: neither its row's key nor its address.
		const photos = await t.db('field_task_photos').select('object_key').where({ network_id: net.network.id });
		expect(photos.length).toBeGreaterThan(0);
		for (const p of photos) expect(text).not.toContain(p.object_key);
		expect(text).not.toContain('photo');

		// Generalised to a 500 m grid: every position is the centre of the 500 m cell that holds the exact one.
		await t.db('networks').where({ id: net.network.id }).update({ public_grid_m: 500 });
		const g = await publicMap(t.db, slug, importance);
		expect(g.generalisedToM).toBe(500);
		for (const p of g.sites) {
			expect(Math.abs((p.x / 500) % 1)).toBeCloseTo(0.5, 6);
			expect(Math.abs((p.y / 500) % 1)).toBeCloseTo(0.5, 6);
		}
		const exact = m.sites.map((p) => generalise(p.x, p.y, 500).join()).sort();
		expect(g.sites.map((p) => [p.x, p.y].join()).sort()).toEqual(exact);
		expect(await cachedPublicMap(t.db, slug, importance)).toEqual(g);
		await t.db('networks').where({ id: net.network.id }).update({ publication: 'private', public_grid_m: null });
		await expect(publicMap(t.db, slug, importance)).rejects.toMatchObject({ status: 404 });
		await expect(cachedPublicMap(t.db, slug, importance)).rejects.toMatchObject({ status: 404 });
	}, 120_000);
});
