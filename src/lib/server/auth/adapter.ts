/**
 * The small part of an Auth.js adapter that e-mail sign-in links need, over our own tables.
 * Sessions are JWTs, so no session methods. Accounts are never created through it: users come from
 * invitations, and a link is only sent to an existing, active user.
 */
import type { Adapter, AdapterUser, VerificationToken } from '@auth/core/adapters';
import type { Knex } from 'knex';
import { findUserByEmail, findUserById, updateUser, type UserRow } from '../repositories/users';

function toAdapterUser(u: UserRow): AdapterUser {
	return { id: String(u.id), email: u.email, name: u.name, emailVerified: u.email_verified_at };
}

export function knexAdapter(db: Knex): Adapter {
	return {
		async createUser() {
			throw new Error('Cairnfield accounts are created by invitation only');
		},
		async getUser(id) {
			const u = await findUserById(db, Number(id));
			return u && u.status === 'active' ? toAdapterUser(u) : null;
		},
		async getUserByEmail(email) {
			const u = await findUserByEmail(db, email);
			return u && u.status === 'active' ? toAdapterUser(u) : null;
		},
		async getUserByAccount() {
			return null;
		},
		async updateUser(user) {
			const id = Number(user.id);
			if (user.emailVerified) await updateUser(db, id, { email_verified_at: user.emailVerified });
			const u = await findUserById(db, id);
			if (!u) throw new Error('no such user');
			return toAdapterUser(u);
		},
		async linkAccount() {
			return undefined;
		},
		async createVerificationToken(vt: VerificationToken) {
			await db('verification_tokens').insert({ identifier: vt.identifier, token: vt.token, expires: vt.expires });
			return vt;
		},
		async useVerificationToken({ identifier, token }) {
			return db.transaction(async (trx) => {
				const row = await trx('verification_tokens').select('identifier', 'token', 'expires').where({ identifier, token }).forUpdate().first();
				if (!row) return null;
				await trx('verification_tokens').where({ identifier, token }).delete();
				return { identifier: row.identifier, token: row.token, expires: new Date(row.expires) };
			});
		}
	};
}
