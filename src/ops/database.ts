/** Migrations and the demo seed, run by `npm start`, `npm test` and `npm run migrate`. */
import path from 'node:path';
import { createDb, migrationConfig } from '../lib/server/db/knex';

const root = path.resolve(import.meta.dirname, '../..');

export async function migrateLatest(url: string): Promise<string[]> {
	const db = createDb(url, 2);
	try {
		const [, done] = await db.migrate.latest(migrationConfig(path.join(root, 'migrations')));
		return done as string[];
	} finally {
		await db.destroy();
	}
}

export async function seedDemo(url: string): Promise<void> {
	const db = createDb(url, 2);
	try {
		const { seed } = await import('../../seeds/demo');
		await seed(db);
	} finally {
		await db.destroy();
	}
}
