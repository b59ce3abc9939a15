/**
 * Sign-in throttling, kept in MariaDB so it holds across restarts and processes.
 *
 * Failures are counted per (e-mail, address) pair, so that nobody can lock another person out by
 * guessing from elsewhere, and clients behind one proxy address do not share a lock. After
 * FREE_FAILURES failed attempts of a pair, each further attempt must wait 2^(n − FREE_FAILURES)
 * seconds after the previous failure, growing to at most MAX_DELAY_SECONDS. A single address that
 * fails across many e-mails (password spraying) is slowed the same way from ADDRESS_FREE_FAILURES.
 * A success clears the failures of its e-mail. Behind a reverse proxy, set the client-address
 * header (adapter-node's ADDRESS_HEADER and XFF_DEPTH) or every client shares the proxy's address.
 */
import type { Db } from '../db';

export const WINDOW_MINUTES = 60;
export const FREE_FAILURES = 3;
export const ADDRESS_FREE_FAILURES = 50;
export const MAX_DELAY_SECONDS = 15 * 60;
/** Rows older than this are removed by purgeSignInAttempts. */
export const KEEP_DAYS = 7;

/** Seconds to wait after the last failure, once `failures` failures were counted beyond `free`. */
export function throttleDelaySeconds(failures: number, free: number): number {
	if (failures < free) return 0;
	return Math.min(MAX_DELAY_SECONDS, 2 ** (failures - free));
}

interface FailureCount {
	n: number;
	last: Date | null;
}

async function failures(db: Db, where: Record<string, string>, since: Date): Promise<FailureCount> {
	const row = await db('sign_in_attempts')
		.where({ ...where, succeeded: false })
		.andWhere('created_at', '>=', since)
		.count({ n: '*' })
		.max({ last: 'created_at' })
		.first();
	return { n: Number(row?.n ?? 0), last: row?.last ? new Date(row.last) : null };
}

/** Seconds until the pair may try again; 0 when it may try now. */
export async function signInWaitSeconds(db: Db, emailKey: string, ip: string, now = Date.now()): Promise<number> {
	const since = new Date(now - WINDOW_MINUTES * 60_000);
	const [pair, address] = await Promise.all([failures(db, { email_key: emailKey, ip }, since), failures(db, { ip }, since)]);
	let wait = 0;
	for (const [c, free] of [
		[pair, FREE_FAILURES],
		[address, ADDRESS_FREE_FAILURES]
	] as const) {
		if (!c.last) continue;
		const until = c.last.getTime() + throttleDelaySeconds(c.n, free) * 1000;
		wait = Math.max(wait, Math.ceil((until - now) / 1000));
	}
	return Math.max(0, wait);
}

export async function isSignInBlocked(db: Db, emailKey: string, ip: string): Promise<boolean> {
	return (await signInWaitSeconds(db, emailKey, ip)) > 0;
}

export async function recordSignInAttempt(db: Db, emailKey: string, ip: string, succeeded: boolean): Promise<void> {
	await db('sign_in_attempts').insert({ email_key: emailKey, ip, succeeded });
	if (succeeded) {
		// A successful sign-in clears the e-mail's failures.
		await db('sign_in_attempts').where({ email_key: emailKey, succeeded: false }).delete();
	}
}

/** Removes attempts older than KEEP_DAYS (they no longer count for anything). */
export async function purgeSignInAttempts(db: Db, keepDays = KEEP_DAYS): Promise<number> {
	return db('sign_in_attempts').where('created_at', '<', new Date(Date.now() - keepDays * 24 * 3600_000)).delete();
}
