/** A signed-in person's own profile: their display name (the password lives in ./passwords). */
import type { Knex } from 'knex';
import { z } from 'zod';
import { recordAudit } from '../repositories/audit';
import { findUserById, updateUser } from '../repositories/users';
import { ServiceError } from './errors';

const nameInput = z.string().trim().min(2, 'Enter a name of 2 to 200 characters.').max(200, 'Enter a name of 2 to 200 characters.');

/** Rename the user, with its audit entry, in one transaction. */
export async function renameUser(db: Knex, userId: number, name: string): Promise<void> {
	const parsed = z.object({ name: nameInput }).safeParse({ name });
	if (!parsed.success) throw ServiceError.fromZod(parsed.error);
	await db.transaction(async (trx) => {
		const before = await findUserById(trx, userId);
		if (!before) throw new ServiceError(404, 'not_found', 'No such user.');
		await updateUser(trx, userId, { name: parsed.data.name });
		await recordAudit(trx, { organisationId: null, actorUserId: userId, action: 'user.rename', objectType: 'user', objectId: userId, before: { name: before.name }, after: { name: parsed.data.name } });
	});
}
