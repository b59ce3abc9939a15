/**
 * A fresh, migrated database per test file on the throwaway MariaDB that `npm test` starts
 * (TEST_DATABASE_ADMIN_URL). Test files run in parallel without sharing rows.
 */
import { randomBytes } from 'node:crypto';
import path from 'node:path';
import type { Knex } from 'knex';
import { createDb, migrationConfig } from '../../src/lib/server/db/knex';

export const migrationsDir = path.resolve(import.meta.dirname, '../../migrations');

export function adminUrl(): string {
	const url = process.env.TEST_DATABASE_ADMIN_URL;
	if (!url) throw new Error('TEST_DATABASE_ADMIN_URL is not set: run the integration tests through `npm test`');
	return url;
}

export interface TestDb {
	db: Knex;
	name: string;
	url: string;
	drop(): Promise<void>;
}

export async function createTestDatabase(opts: { migrate?: boolean } = {}): Promise<TestDb> {
	const name = `cf_t_${randomBytes(5).toString('hex')}`;
	const admin = createDb(adminUrl(), 1);
	await admin.raw(`CREATE DATABASE \`${name}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci`);
	await admin.destroy();
	const url = adminUrl().replace(/\/?$/, `/${name}`);
	const db = createDb(url, 4);
	if (opts.migrate !== false) await db.migrate.latest(migrationConfig(migrationsDir));
	return {
		db,
		name,
		url,
		async drop() {
			await db.destroy();
			const a = createDb(adminUrl(), 1);
			await a.raw(`DROP DATABASE IF EXISTS \`${name}\``);
			await a.destroy();
		}
	};
}

/** Inserts an organisation and a user with a role; returns their ids. */
export async function makeMember(db: Knex, role: 'admin' | 'analyst' | 'reviewer' | 'technician', org?: number): Promise<{ userId: number; organisationId: number; email: string }> {
	let organisationId = org;
	if (!organisationId) {
		[organisationId] = await db('organisations').insert({ slug: `org-${randomBytes(3).toString('hex')}`, name: 'Test organisation' });
	}
	const email = `${role}-${randomBytes(3).toString('hex')}@example.test`;
	const [userId] = await db('users').insert({ email, name: `Test ${role}`, password_hash: null });
	await db('memberships').insert({ organisation_id: organisationId, user_id: userId, role });
	return { userId, organisationId: organisationId!, email };
}

/** mysql2 returns MariaDB JSON columns parsed on some server versions and as text on others. */
export function jsonValue(v: unknown): unknown {
	return typeof v === 'string' ? JSON.parse(v) : v;
}
