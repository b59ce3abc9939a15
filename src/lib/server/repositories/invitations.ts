import type { Db } from '../db';
import type { Role } from '../auth/roles';

export interface InvitationRow {
	id: number;
	organisation_id: number;
	email: string;
	role: Role;
	expires_at: Date;
	accepted_at: Date | null;
	revoked_at: Date | null;
	created_at: Date;
}

const columns = ['id', 'organisation_id', 'email', 'role', 'expires_at', 'accepted_at', 'revoked_at', 'created_at'] as const;

export async function insertInvitation(db: Db, inv: { organisation_id: number; email: string; role: Role; token_hash: string; invited_by: number; expires_at: Date }): Promise<number> {
	const [id] = await db('invitations').insert(inv);
	return id;
}

export async function findInvitationByTokenHash(db: Db, tokenHash: string, opts: { forUpdate?: boolean } = {}): Promise<InvitationRow | undefined> {
	const q = db('invitations').select(columns).where({ token_hash: tokenHash }).first();
	return opts.forUpdate ? q.forUpdate() : q;
}

export async function openInvitations(db: Db, organisationId: number): Promise<InvitationRow[]> {
	return db('invitations')
		.select(columns)
		.where({ organisation_id: organisationId })
		.whereNull('accepted_at')
		.whereNull('revoked_at')
		.andWhere('expires_at', '>', new Date())
		.orderBy('created_at', 'desc');
}

export async function markAccepted(db: Db, id: number): Promise<void> {
	await db('invitations').where({ id }).update({ accepted_at: db.fn.now() });
}

export async function revokeInvitation(db: Db, organisationId: number, id: number): Promise<number> {
	return db('invitations').where({ id, organisation_id: organisationId }).whereNull('accepted_at').update({ revoked_at: db.fn.now() });
}

export async function revokeOpenFor(db: Db, organisationId: number, email: string): Promise<void> {
	await db('invitations').where({ organisation_id: organisationId, email }).whereNull('accepted_at').whereNull('revoked_at').update({ revoked_at: db.fn.now() });
}
