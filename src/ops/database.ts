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

/** `storageEnv` names the app's object store (STORAGE_BACKEND, STORAGE_DIR, S3_*): the demo rasters go there. */
export async function seedDemo(url: string, storageEnv: Record<string, string | undefined>): Promise<void> {
	const db = createDb(url, 2);
	try {
		const [{ seed }, { createObjectStore }] = await Promise.all([import('../../seeds/demo'), import('../lib/server/storage/create-object-store')]);
		await seed(db, createObjectStore(storageEnv));
	} finally {
		await db.destroy();
	}
}
