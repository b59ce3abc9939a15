/** Password hashing with bcrypt (bcryptjs, pure JavaScript). */
import bcrypt from 'bcryptjs';

export const PASSWORD_MIN_LENGTH = 10;
const COST = 11;
let dummyHash: string | undefined;

export function hashPassword(plain: string): Promise<string> {
	return bcrypt.hash(plain, COST);
}

export async function verifyPassword(plain: string, hash: string | null | undefined): Promise<boolean> {
	// Compare against a throwaway hash when the user has none, so timing does not reveal which e-mails exist.
	dummyHash ??= bcrypt.hashSync('no user has this password', COST);
	const ok = await bcrypt.compare(plain, hash ?? dummyHash);
	return ok && !!hash;
}

/** A readable reason when a new password is not acceptable, or null. */
export function passwordProblem(plain: string): string | null {
	if (plain.length < PASSWORD_MIN_LENGTH) return `Use at least ${PASSWORD_MIN_LENGTH} characters.`;
	if (plain.length > 200) return 'Use at most 200 characters.';
	return null;
}
