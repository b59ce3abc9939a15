/** The app's one Knex instance, built on first use from DATABASE_URL. */
import { env } from '$env/dynamic/private';
import type { Knex } from 'knex';
import { createDb } from './knex';

export type { Db } from './knex';

let instance: Knex | undefined;

export function getDb(): Knex {
	instance ??= createDb(env.DATABASE_URL ?? '', Number(env.DATABASE_POOL_MAX ?? 10));
	return instance;
}

/** Closes the pool, so the process can exit after a graceful shutdown. */
export async function closeDb(): Promise<void> {
	const db = instance;
	instance = undefined;
	await db?.destroy();
}
