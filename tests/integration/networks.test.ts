import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createNetwork, updateNetworkDetails } from '../../src/lib/server/services/networks';
import { createTestDatabase, jsonValue, makeMember, type TestDb } from '../helpers/db';

describe('networks service', () => {
	let t: TestDb;
	beforeAll(async () => {
		t = await createTestDatabase();
	});
	afterAll(async () => t?.drop());

	it('createNetwork derives a slug, refuses a duplicate and audits the creation', async () => {
		const admin = await makeMember(t.db, 'admin');
		const id = await createNetwork(t.db, admin.organisationId, admin.userId, { name: 'Upper Brook Fields', description: '', crsEpsg: 32630, publicText: '' });
		const row = await t.db('networks').where({ id }).first();
		expect(row.slug).toBe('upper-brook-fields');
		await expect(createNetwork(t.db, admin.organisationId, admin.userId, { name: 'Upper Brook Fields', description: '', crsEpsg: null, publicText: '' })).rejects.toMatchObject({ code: 'slug_taken' });
		expect(await t.db('audit_log').where({ action: 'network.create', object_id: String(id) }).first()).toBeTruthy();
	});

	it('updateNetworkDetails is optimistic: a stale version is refused and changes nothing', async () => {
		const admin = await makeMember(t.db, 'admin');
		const id = await createNetwork(t.db, admin.organisationId, admin.userId, { name: 'Low Moor', description: 'a', crsEpsg: null, publicText: '' });
		const after = await updateNetworkDetails(t.db, id, admin.userId, { version: 1, description: 'b' }, { mayPublish: false });
		expect(after.version).toBe(2);
		await expect(updateNetworkDetails(t.db, id, admin.userId, { version: 1, description: 'c' }, { mayPublish: false })).rejects.toMatchObject({ code: 'stale' });
		expect((await t.db('networks').where({ id }).first()).description).toBe('b');
		await expect(updateNetworkDetails(t.db, id, admin.userId, { version: 2, publication: 'published' }, { mayPublish: false })).rejects.toMatchObject({ status: 403 });
		const audits = await t.db('audit_log').where({ action: 'network.update', object_id: String(id) });
		expect(audits).toHaveLength(1);
		expect(jsonValue(audits[0].before)).toEqual({ description: 'a' });
	});
});
