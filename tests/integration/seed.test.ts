import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { seed, DEMO_USERS } from '../../seeds/demo';
import { createTestDatabase, type TestDb } from '../helpers/db';

describe('demo seed', () => {
	let t: TestDb;
	beforeAll(async () => {
		t = await createTestDatabase();
	});
	afterAll(async () => t?.drop());

	it('is idempotent: a second run adds nothing', async () => {
		await seed(t.db);
		const count = async (table: string) => Number((await t.db(table).count({ n: '*' }).first())!.n);
		const before = { users: await count('users'), memberships: await count('memberships'), networks: await count('networks'), orgs: await count('organisations') };
		await seed(t.db);
		expect({ users: await count('users'), memberships: await count('memberships'), networks: await count('networks'), orgs: await count('organisations') }).toEqual(before);
		expect(before.users).toBe(DEMO_USERS.length);
	});

	it('gives one demo user per role', async () => {
		const roles = (await t.db('memberships').select('role')).map((r: { role: string }) => r.role).sort();
		expect(roles).toEqual(['admin', 'analyst', 'reviewer', 'technician']);
	});
});
