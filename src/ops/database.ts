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

/**
 * Loads the demo scenario; its users only for a loopback `origin` unless asked for (see
 * demoUsersWanted). `storageEnv` names the app's object store (STORAGE_BACKEND, STORAGE_DIR, S3_*):
 * the demo rasters go there.
 */
export async function seedDemo(url: string, origin: string, storageEnv: Record<string, string | undefined> = process.env): Promise<{ users: boolean }> {
	const db = createDb(url, 2);
	try {
		const [{ seed, demoUsersWanted }, { createObjectStore }] = await Promise.all([import('../../seeds/demo'), import('../lib/server/storage/create-object-store')]);
		const { users, warning } = demoUsersWanted(origin, process.env);
		if (warning) console.warn(users ? `\n${'!'.repeat(78)}\n${warning}\n${'!'.repeat(78)}\n` : warning);
		await seed(db, { users, store: createObjectStore(storageEnv), origin });
		return { users };
	} finally {
		await db.destroy();
	}
}
