import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { renameUser } from '../../src/lib/server/services/profile';
import { createTestDatabase, jsonValue, makeMember, type TestDb } from '../helpers/db';

describe('renameUser (profile)', () => {
	let t: TestDb;
	beforeAll(async () => {
		t = await createTestDatabase();
	});
	afterAll(async () => t?.drop());

	it('renames with its audit entry, and refuses a name too short with nothing written', async () => {
		const m = await makeMember(t.db, 'technician');
		const before = await t.db('users').where({ id: m.userId }).first();
		await renameUser(t.db, m.userId, '  Ilse Marrow  ');
		expect((await t.db('users').where({ id: m.userId }).first()).name).toBe('Ilse Marrow');
		const audit = await t.db('audit_log').where({ action: 'user.rename', object_id: String(m.userId) });
		expect(audit).toHaveLength(1);
		expect(jsonValue(audit[0].before)).toEqual({ name: before.name });
		await expect(renameUser(t.db, m.userId, 'X')).rejects.toMatchObject({ status: 400, field: 'name' });
		expect((await t.db('users').where({ id: m.userId }).first()).name).toBe('Ilse Marrow');
		expect(await t.db('audit_log').where({ action: 'user.rename', object_id: String(m.userId) })).toHaveLength(1);
	});
});
