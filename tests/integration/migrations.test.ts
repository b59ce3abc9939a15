import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readdirSync } from 'node:fs';
import { migrationConfig } from '../../src/lib/server/db/knex';
import { createTestDatabase, migrationsDir, type TestDb } from '../helpers/db';

const expectedTables = ['field_tasks', 'field_task_updates', 'field_task_photos', 'field_caution_acknowledgements', 'jobs', 'proposals', 'revisions', 'reviews', 'plans', 'layers', 'importance_recipes', 'importance_recipe_versions', 'sensor_types', 'sensors', 'zone_sets', 'zones', 'organisations', 'users', 'memberships', 'networks', 'audit_log', 'outbox_messages', 'invitations', 'password_resets', 'sign_in_attempts', 'verification_tokens'];

async function tables(t: TestDb): Promise<string[]> {
	const rows = await t.db('information_schema.tables').select('table_name as name').where('table_schema', t.name);
	return rows.map((r: { name: string }) => r.name).filter((n: string) => !n.startsWith('knex_'));
}

describe('migrations on a throwaway MariaDB', () => {
	let t: TestDb;
	beforeAll(async () => {
		t = await createTestDatabase({ migrate: false });
	});
	afterAll(async () => t?.drop());

	it('are named YYYYMMDDHHMMSS_snake_case.ts', () => {
		for (const f of readdirSync(migrationsDir)) expect(f).toMatch(/^\d{14}_[a-z0-9_]+\.ts$/);
	});

	it('go up, all the way down, and up again', async () => {
		const cfg = migrationConfig(migrationsDir);
		await t.db.migrate.latest(cfg);
		expect(await tables(t)).toEqual(expect.arrayContaining(expectedTables));
		await t.db.migrate.rollback(cfg, true);
		expect(await tables(t)).toEqual([]);
		await t.db.migrate.latest(cfg);
		expect(await tables(t)).toEqual(expect.arrayContaining(expectedTables));
		const [, pending] = await t.db.migrate.list(cfg);
		expect(pending).toEqual([]);
	});

	it('store utf8mb4 text and JSON columns', async () => {
		const [orgId] = await t.db('organisations').insert({ slug: 'utf', name: 'Fjällbäck 🌧 Vale' });
		const row = await t.db('organisations').where({ id: orgId }).first();
		expect(row.name).toBe('Fjällbäck 🌧 Vale');
		await expect(t.db('networks').insert({ organisation_id: orgId, slug: 'x', name: 'x', description: '', public_text: '', study_area: '{not json' })).rejects.toThrow();
	});
});
