/** The password sign-in check, apart from Auth.js so that it can be tested on its own. */
import type { Db } from '../db';
import { findUserByEmail, normaliseEmail, type UserRow } from '../repositories/users';
import { verifyPassword } from './password';
import { recordSignInAttempt, signInWaitSeconds } from './rate-limit';

export type PasswordCheck = { ok: true; user: UserRow } | { ok: false; reason: 'invalid' | 'throttled' };

/**
 * Checks an e-mail and password. bcrypt runs in every case (a throwaway hash stands in for an
 * unknown e-mail, a disabled account or one without a password), so the answer takes as long
 * whether or not the e-mail exists. Failures are counted per (e-mail, address) pair.
 */
export async function checkPassword(db: Db, rawEmail: string, password: string, ip: string): Promise<PasswordCheck> {
	const email = normaliseEmail(rawEmail);
	// Past 200 characters nothing can match (bcrypt reads 72 bytes); refuse before hashing anything.
	if (!email || !password || email.length > 254 || password.length > 200) return { ok: false, reason: 'invalid' };
	if ((await signInWaitSeconds(db, email, ip)) > 0) return { ok: false, reason: 'throttled' };
	const user = await findUserByEmail(db, email);
	const usable = user && user.status === 'active' ? user.password_hash : null;
	const ok = await verifyPassword(password, usable);
	await recordSignInAttempt(db, email, ip, ok);
	return ok && user ? { ok: true, user } : { ok: false, reason: 'invalid' };
}
