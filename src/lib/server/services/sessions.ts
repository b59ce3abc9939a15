/**
 * Sessions are JWTs that carry the user's session version from when they began; every request
 * compares it with the user's row (see auth/actor.ts). Raising the version ends every session at
 * once: "sign out everywhere", password changes and resets, disabling an account.
 */
import type { Knex } from 'knex';
import { recordAudit } from '../repositories/audit';
import { bumpSessionVersion, updateUser } from '../repositories/users';

/** Ends every session of the user, this one included. */
export async function signOutEverywhere(db: Knex, userId: number): Promise<void> {
	await db.transaction(async (trx) => {
		await bumpSessionVersion(trx, userId);
		await recordAudit(trx, { organisationId: null, actorUserId: userId, action: 'sessions.revoke', objectType: 'user', objectId: userId });
	});
}

/** Disables an account and ends its sessions in the same step. */
export async function disableAccount(db: Knex, actorId: number | null, userId: number): Promise<void> {
	await db.transaction(async (trx) => {
		await updateUser(trx, userId, { status: 'disabled' });
		await bumpSessionVersion(trx, userId);
		await recordAudit(trx, { organisationId: null, actorUserId: actorId, action: 'user.disable', objectType: 'user', objectId: userId });
	});
}
