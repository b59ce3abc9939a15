/** Password hashing with bcrypt (bcryptjs, pure JavaScript). */
import bcrypt from 'bcryptjs';

export const PASSWORD_MIN_LENGTH = 10;
/** bcrypt reads at most 72 bytes of a password and ignores the rest (its key schedule takes 72 bytes). */
export const PASSWORD_MAX_BYTES = 72;
const COST = 11;
let dummyHash: string | undefined;

export function hashPassword(plain: string): Promise<string> {
	return bcrypt.hash(plain, COST);
}

/**
 * Compares against a throwaway hash when there is no hash (no such user, or no password), so the
 * time taken does not reveal which e-mails exist. Callers must call it in every case.
 */
export async function verifyPassword(plain: string, hash: string | null | undefined): Promise<boolean> {
	dummyHash ??= await bcrypt.hash('no user has this password', COST);
	const ok = await bcrypt.compare(plain, hash ?? dummyHash);
	return ok && !!hash;
}

/** A readable reason when a new password is not acceptable, or null. */
export function passwordProblem(plain: string): string | null {
	if (plain.length < PASSWORD_MIN_LENGTH) return `Use at least ${PASSWORD_MIN_LENGTH} characters.`;
	if (Buffer.byteLength(plain, 'utf8') > PASSWORD_MAX_BYTES) {
		return `Use at most ${PASSWORD_MAX_BYTES} bytes (72 plain letters and digits; accented letters and symbols take 2 to 4 each).`;
	}
	return null;
}
