/**
 * The demo's field stage on a network built from the demo files: an approved plan with tasks for
 * the technician, two done (the inventory follows, one flagged), one blocked; idempotent; the
 * public map shows the as-installed positions.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeThreadPools } from '../../src/lib/server/jobs';
import { currentTasks } from '../../src/lib/server/services/field-tasks';
import { publicMap } from '../../src/lib/server/services/public-map';
import { findSensor } from '../../src/lib/server/repositories/sensors';
import { seedDemoProposals } from '../../seeds/demo-proposals';
import { DEMO_FIELD, seedDemoField } from '../../seeds/demo-field';
import { createTestDatabase, makeMember, type TestDb } from '../helpers/db';
import { placementNetwork, type PlacementNetwork } from '../helpers/placement-network';
import { fsTestStore, type TestStore } from './layers-support';

const ORIGIN = 'https://cairnfield.example.org';

describe('demo field stage', () => {
	let t: TestDb;
	let s: TestStore;
	let net: PlacementNetwork;
	let actors: Parameters<typeof seedDemoField>[2];

	beforeAll(async () => {
		t = await createTestDatabase();
		s = await fsTestStore();
		const a = await makeMember(t.db, 'analyst');
		const r = await makeMember(t.db, 'reviewer', a.organisationId);
		const tech = await makeMember(t.db, 'technician', a.organisationId);
		net = await placementNetwork(t.db, s.store, a.organisationId, a.userId, 'Demo field');
		actors = { networkId: net.network.id, analyst: { id: a.userId, name: 'Analyst' }, reviewer: { id: r.userId, name: 'Reviewer' }, technician: { id: tech.userId, name: 'Technician' } };
		await seedDemoProposals(t.db, s.store, actors, ORIGIN, () => undefined);
		await seedDemoField(t.db, s.store, actors, ORIGIN);
	}, 180_000);
	afterAll(async () => {
		await closeThreadPools();
		await s?.close();
		await t?.drop();
	});

	it('the technician has the route: two done (one flagged beyond 10 m), one blocked, the rest open', async () => {
		const route = await currentTasks(t.db, net.network.id, { assigneeId: actors.technician.id });
		expect(route.length).toBeGreaterThan(3);
		expect(route.map((x) => x.order)).toEqual(route.map((_, i) => i + 1));
		expect(route.slice(0, 3).map((x) => x.state)).toEqual(['done', 'done', 'blocked']);
		expect(route.slice(3).every((x) => x.state === 'open')).toBe(true);
		expect(route[0].offsetM!).toBeCloseTo(4, 3);
		expect(route[0].offsetFlagged).toBe(false);
		expect(route[1].offsetM!).toBeCloseTo(14, 3);
		expect(route[1].offsetFlagged).toBe(true);
		expect(route[2].blockedReason).toBe(DEMO_FIELD.blockedReason);
		for (const done of route.slice(0, 2)) {
			const sensor = await findSensor(t.db, net.network.id, done.sensorId!);
			expect([sensor!.lon, sensor!.lat]).toEqual([done.installed!.lon, done.installed!.lat]);
		}
	});

	it('is idempotent, and the public map shows the as-installed positions', async () => {
		const before = await t.db('field_tasks').count({ n: '*' }).first();
		await seedDemoField(t.db, s.store, actors, ORIGIN);
		expect((await t.db('field_tasks').count({ n: '*' }).first())!.n).toBe(before!.n);
		await t.db('networks').where({ id: net.network.id }).update({ publication: 'published' });
		const m = await publicMap(t.db, net.network.slug, { versionId: async () => null }, s.store);
		const route = await currentTasks(t.db, net.network.id, { assigneeId: actors.technician.id });
		for (const done of route.filter((x) => x.state === 'done')) {
			expect(m.sites.some((p) => Math.abs(p.lon - done.installed!.lon) < 1e-9 && Math.abs(p.lat - done.installed!.lat) < 1e-9)).toBe(true);
		}
	});
});
