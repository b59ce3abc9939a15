/** Forgotten passwords and password changes. */
import type { Knex } from 'knex';
import { hashPassword, passwordProblem, verifyPassword } from '../auth/password';
import { hashToken, newToken } from '../auth/tokens';
import { recordAudit } from '../repositories/audit';
import { enqueueMail } from '../repositories/outbox';
import { closeOpenResets, findReset, insertReset, markUsed, recentResetCount } from '../repositories/password-resets';
import { bumpSessionVersion, findUserByEmail, findUserById, updateUser } from '../repositories/users';
import { publicUrl } from '../http/public-origin';
import { passwordResetMail } from '../mail/templates';
import { ServiceError } from './errors';

export const RESET_MINUTES = 60;

/**
 * Queues a reset e-mail when the address belongs to an active user. Says nothing either way. The
 * link starts with ORIGIN, never with the host the request named.
 */
export async function requestPasswordReset(db: Knex, email: string): Promise<void> {
	await db.transaction(async (trx) => {
		const user = await findUserByEmail(trx, email);
		if (!user || user.status !== 'active') return;
		if ((await recentResetCount(trx, user.id, RESET_MINUTES)) >= 3) return; // quietly rate-limited
		const { token, hash } = newToken();
		await insertReset(trx, user.id, hash, new Date(Date.now() + RESET_MINUTES * 60_000));
		await enqueueMail(trx, passwordResetMail(user.email, publicUrl(`/reset/${token}`)));
		await recordAudit(trx, { organisationId: null, actorUserId: null, action: 'password.reset_requested', objectType: 'user', objectId: user.id });
	});
}

export async function resetTokenValid(db: Knex, token: string): Promise<boolean> {
	const r = await findReset(db, hashToken(token));
	return !!r && !r.used_at && new Date(r.expires_at).getTime() > Date.now();
}

export async function completePasswordReset(db: Knex, token: string, password: string): Promise<void> {
	const problem = passwordProblem(password);
	if (problem) throw new ServiceError(400, 'weak_password', problem, 'password');
	const hash = await hashPassword(password);
	await db.transaction(async (trx) => {
		const r = await findReset(trx, hashToken(token), { forUpdate: true });
		if (!r || r.used_at || new Date(r.expires_at).getTime() < Date.now()) {
			throw new ServiceError(400, 'invalid_token', 'This reset link is no longer valid. Ask for a new one.');
		}
		await updateUser(trx, r.user_id, { password_hash: hash });
		await markUsed(trx, r.id);
		// Every other open link stops working, and every session ends (whoever forgot may not be alone).
		await closeOpenResets(trx, r.user_id);
		await bumpSessionVersion(trx, r.user_id);
		await trx('sign_in_attempts').where({ email_key: (await findUserById(trx, r.user_id))!.email }).delete();
		await recordAudit(trx, { organisationId: null, actorUserId: r.user_id, action: 'password.reset', objectType: 'user', objectId: r.user_id });
	});
}

export async function changePassword(db: Knex, userId: number, current: string, next: string): Promise<void> {
	const user = await findUserById(db, userId);
	if (!user) throw new ServiceError(404, 'not_found', 'No such user.');
	if (!(await verifyPassword(current, user.password_hash))) throw new ServiceError(400, 'wrong_password', 'The current password is not right.', 'current');
	const problem = passwordProblem(next);
	if (problem) throw new ServiceError(400, 'weak_password', problem, 'password');
	const hash = await hashPassword(next);
	await db.transaction(async (trx) => {
		await updateUser(trx, userId, { password_hash: hash });
		await closeOpenResets(trx, userId);
		await bumpSessionVersion(trx, userId);
		await recordAudit(trx, { organisationId: null, actorUserId: userId, action: 'password.change', objectType: 'user', objectId: userId });
	});
}
