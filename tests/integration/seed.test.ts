import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { seed, DEMO_USERS, DEMO_NETWORK, DEMO_ORGANISATION } from '../../seeds/demo';
import { DEMO_LAYERS, DEMO_ZONE_SET_NAME } from '../../seeds/demo-network';
import { FsObjectStore } from '../../src/lib/server/storage/fs-store';
import { createTestDatabase, type TestDb } from '../helpers/db';

const TABLES = ['users', 'memberships', 'networks', 'organisations', 'layers', 'importance_recipes', 'importance_recipe_versions', 'zone_sets', 'zones', 'sensors', 'sensor_types', 'audit_log'];

describe('demo seed', () => {
	let t: TestDb;
	let dir: string;
	let store: FsObjectStore;
	beforeAll(async () => {
		t = await createTestDatabase();
		dir = mkdtempSync(path.join(tmpdir(), 'cf-seed-'));
		store = new FsObjectStore(dir);
	});
	afterAll(async () => {
		await t?.drop();
		rmSync(dir, { recursive: true, force: true });
	});

	const counts = async () => {
		const out: Record<string, number> = {};
		for (const table of TABLES) out[table] = Number((await t.db(table).count({ n: '*' }).first())!.n);
		return out;
	};

	it('is idempotent: a second run adds nothing', async () => {
		await seed(t.db, { store });
		const before = await counts();
		await seed(t.db, { store });
		expect(await counts()).toEqual(before);
		expect(before.users).toBe(DEMO_USERS.length);
	});

	it('gives one demo user per role', async () => {
		const roles = (await t.db('memberships').select('role')).map((r: { role: string }) => r.role).sort();
		expect(roles).toEqual(['admin', 'analyst', 'reviewer', 'technician']);
	});

	it('makes a living network: study area, exclusions, both rasters, a recipe version and a measured zone set in use, 14 sensors', async () => {
		const net = await t.db('networks').where({ slug: DEMO_NETWORK.slug }).first();
		expect(net.study_area).not.toBeNull();
		expect(net.exclusions).not.toBeNull();
		const layers = await t.db('layers').where({ network_id: net.id }).orderBy('id');
		expect(layers.map((l: { name: string; status: string }) => [l.name, l.status])).toEqual(DEMO_LAYERS.map((l) => [l.name, 'ready']));
		expect(net.recipe_version_id).not.toBeNull();
		const version = await t.db('importance_recipe_versions').where({ id: net.recipe_version_id }).first();
		expect(version.surface_key).toBeTruthy();
		const set = await t.db('zone_sets').where({ id: net.zone_set_id }).first();
		expect(set.name).toBe(DEMO_ZONE_SET_NAME);
		expect(set.recipe_version_id).toBe(net.recipe_version_id);
		const shares = (await t.db('zones').where({ zone_set_id: set.id })).map((z: { importance_share: number | null }) => Number(z.importance_share));
		expect(shares).toHaveLength(4);
		for (const s of shares) expect(s).toBeGreaterThan(0); // a null share reads as 0 here
		// data/demo/README.md: the four sub-catchments partition the catchment, so their shares sum to all of it
		// (cells are taken by their centre, so a few boundary cells may fall between polygons).
		expect(shares.reduce((a, b) => a + b, 0)).toBeGreaterThan(0.99);
		expect(shares.reduce((a, b) => a + b, 0)).toBeLessThanOrEqual(1 + 1e-9);
		// data/demo/README.md: 12 probes and 2 neutron sensors; the field stage completes moves only,
		// so its new probe stays planned and the inventory keeps fourteen.
		expect(Number((await t.db('field_tasks').where({ network_id: net.id, kind: 'install', state: 'done' }).count({ n: '*' }).first())!.n)).toBe(0);
		expect(Number((await t.db('field_tasks').where({ network_id: net.id, kind: 'move', state: 'done' }).count({ n: '*' }).first())!.n)).toBe(2);
		expect(Number((await t.db('sensors').where({ network_id: net.id }).count({ n: '*' }).first())!.n)).toBe(14);
		// Written through the services, each with its audit entry.
		const actions = new Set((await t.db('audit_log').select('action')).map((a: { action: string }) => a.action));
		for (const a of ['network.area', 'layer.create', 'recipe.version.create', 'network.recipe_version', 'network.zone_set', 'sensor.import']) expect(actions, a).toContain(a);
	});
});

describe('demo seed over a demo network from before it had content', () => {
	let t: TestDb;
	let dir: string;
	beforeAll(async () => {
		t = await createTestDatabase();
		dir = mkdtempSync(path.join(tmpdir(), 'cf-seed-old-'));
	});
	afterAll(async () => {
		await t?.drop();
		rmSync(dir, { recursive: true, force: true });
	});

	it('replaces the earlier outline elsewhere, so that the rasters fall inside, and fills the network', async () => {
		const [orgId] = await t.db('organisations').insert(DEMO_ORGANISATION);
		const elsewhere = { type: 'MultiPolygon', coordinates: [[[[10.1, 52.9], [10.3, 52.9], [10.3, 53.0], [10.1, 53.0], [10.1, 52.9]]]] };
		await t.db('networks').insert({ ...DEMO_NETWORK, organisation_id: orgId, study_area: JSON.stringify(elsewhere), publication: 'published' });
		await seed(t.db, { store: new FsObjectStore(dir) });
		const net = await t.db('networks').where({ slug: DEMO_NETWORK.slug }).first();
		const area = typeof net.study_area === 'string' ? JSON.parse(net.study_area) : net.study_area;
		// data/demo/README.md: the catchment lies near 143.55° E, 32.15° S.
		expect(area.coordinates[0][0][0][0]).toBeGreaterThan(143);
		expect(area.coordinates[0][0][0][1]).toBeLessThan(-32);
		expect(net.zone_set_id).not.toBeNull();
		expect(Number((await t.db('sensors').where({ network_id: net.id }).count({ n: '*' }).first())!.n)).toBe(14);
	});
});
