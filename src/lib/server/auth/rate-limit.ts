/**
 * Sign-in rate limiting, kept in MariaDB so it holds across restarts and processes:
 * at most MAX_PER_EMAIL failed attempts per e-mail and MAX_PER_IP per address in WINDOW_MINUTES.
 */
import type { Db } from '../db';

export const WINDOW_MINUTES = 15;
export const MAX_PER_EMAIL = 5;
export const MAX_PER_IP = 30;

export async function isSignInBlocked(db: Db, emailKey: string, ip: string): Promise<boolean> {
	const since = new Date(Date.now() - WINDOW_MINUTES * 60_000);
	const [byEmail, byIp] = await Promise.all([
		db('sign_in_attempts').where({ email_key: emailKey, succeeded: false }).andWhere('created_at', '>=', since).count({ n: '*' }).first(),
		db('sign_in_attempts').where({ ip, succeeded: false }).andWhere('created_at', '>=', since).count({ n: '*' }).first()
	]);
	return Number(byEmail?.n ?? 0) >= MAX_PER_EMAIL || Number(byIp?.n ?? 0) >= MAX_PER_IP;
}

export async function recordSignInAttempt(db: Db, emailKey: string, ip: string, succeeded: boolean): Promise<void> {
	await db('sign_in_attempts').insert({ email_key: emailKey, ip, succeeded });
	if (succeeded) {
		// A successful sign-in clears the e-mail's failures.
		await db('sign_in_attempts').where({ email_key: emailKey, succeeded: false }).delete();
	}
}
