/** Builds Knex instances. The app uses the one in ./index; scripts and tests build their own. */
import knex, { type Knex } from 'knex';
import { readdirSync } from 'node:fs';
import path from 'node:path';
import { pathToFileURL } from 'node:url';

export type Db = Knex | Knex.Transaction;

export function createDb(url: string, poolMax = 10): Knex {
	if (!url) throw new Error('DATABASE_URL is not set');
	const u = new URL(url);
	if (u.protocol !== 'mysql:' && u.protocol !== 'mariadb:') throw new Error(`DATABASE_URL must be mysql://…, got ${u.protocol}`);
	return knex({
		client: 'mysql2',
		connection: {
			host: u.hostname,
			port: Number(u.port || 3306),
			user: decodeURIComponent(u.username),
			password: decodeURIComponent(u.password),
			database: u.pathname.replace(/^\//, ''),
			timezone: 'Z',
			charset: 'utf8mb4',
			supportBigNumbers: true,
			bigNumberStrings: false
		},
		pool: { min: 0, max: poolMax }
	});
}

/**
 * Migration settings shared by the scripts and the tests. The migrations are loaded with this
 * module's own dynamic import, so they run as TypeScript under tsx and under vitest alike.
 */
export function migrationConfig(directory: string): Knex.MigratorConfig {
	const source: Knex.MigrationSource<string> = {
		async getMigrations() {
			return readdirSync(directory)
				.filter((f) => /^\d{14}_[a-z0-9_]+\.ts$/.test(f))
				.sort();
		},
		getMigrationName: (name) => name,
		getMigration: (name) => import(/* @vite-ignore */ pathToFileURL(path.join(directory, name)).href)
	};
	return { migrationSource: source, tableName: 'knex_migrations' };
}
