import type { Db } from '../db';

export async function insertReset(db: Db, userId: number, tokenHash: string, expiresAt: Date): Promise<void> {
	await db('password_resets').insert({ user_id: userId, token_hash: tokenHash, expires_at: expiresAt });
}

export async function findReset(db: Db, tokenHash: string, opts: { forUpdate?: boolean } = {}): Promise<{ id: number; user_id: number; expires_at: Date; used_at: Date | null } | undefined> {
	const q = db('password_resets').select('id', 'user_id', 'expires_at', 'used_at').where({ token_hash: tokenHash }).first();
	return opts.forUpdate ? q.forUpdate() : q;
}

export async function markUsed(db: Db, id: number): Promise<void> {
	await db('password_resets').where({ id }).update({ used_at: db.fn.now() });
}

export async function recentResetCount(db: Db, userId: number, sinceMinutes: number): Promise<number> {
	const row = await db('password_resets').where({ user_id: userId }).andWhere('created_at', '>=', new Date(Date.now() - sinceMinutes * 60_000)).count({ n: '*' }).first();
	return Number(row?.n ?? 0);
}

/** Marks every still-open reset of the user as used: after a reset or a change, older links stop working. */
export async function closeOpenResets(db: Db, userId: number): Promise<number> {
	return db('password_resets').where({ user_id: userId }).whereNull('used_at').update({ used_at: db.fn.now() });
}

/** Removes resets that expired or were used more than `olderThanDays` ago. */
export async function purgeOldResets(db: Db, olderThanDays: number): Promise<number> {
	const before = new Date(Date.now() - olderThanDays * 24 * 3600_000);
	return db('password_resets').where('expires_at', '<', before).delete();
}
