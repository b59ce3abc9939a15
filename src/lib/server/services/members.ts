/** Users of an organisation: invitations, accepting them, role changes and removal. */
import type { Knex } from 'knex';
import { z } from 'zod';
import { hashPassword, passwordProblem } from '../auth/password';
import { ROLES, type Role } from '../auth/roles';
import { hashToken, newToken } from '../auth/tokens';
import { recordAudit } from '../repositories/audit';
import { findInvitationByTokenHash, insertInvitation, markAccepted, revokeInvitation, revokeOpenFor, type InvitationRow } from '../repositories/invitations';
import { enqueueMail } from '../repositories/outbox';
import { countAdmins, findUserByEmail, insertUser, membership, normaliseEmail, removeMembership, setMembership } from '../repositories/users';
import { invitationMail } from '../mail/templates';
import { publicUrl } from '../http/public-origin';
import { ServiceError } from './errors';

export const INVITATION_DAYS = 7;

export const inviteInput = z.object({
	email: z.string().trim().toLowerCase().email('Enter a valid e-mail address.').max(254),
	role: z.enum(ROLES, { message: 'Choose a role.' })
});

export async function inviteMember(db: Knex, opts: { organisationId: number; organisationName: string; inviter: { id: number; name: string }; email: string; role: Role }): Promise<{ invitationId: number; url: string }> {
	const email = normaliseEmail(opts.email);
	return db.transaction(async (trx) => {
		const existing = await findUserByEmail(trx, email);
		if (existing && (await membership(trx, opts.organisationId, existing.id))) {
			throw new ServiceError(409, 'already_member', `${email} is already a member. Change the role in the table instead.`, 'email');
		}
		await revokeOpenFor(trx, opts.organisationId, email);
		const { token, hash } = newToken();
		const expires = new Date(Date.now() + INVITATION_DAYS * 24 * 3600_000);
		const invitationId = await insertInvitation(trx, { organisation_id: opts.organisationId, email, role: opts.role, token_hash: hash, invited_by: opts.inviter.id, expires_at: expires });
		// Built from ORIGIN alone, never from the request's host headers.
		const url = publicUrl(`/invite/${token}`);
		await enqueueMail(trx, invitationMail(email, opts.organisationName, opts.role, opts.inviter.name, url));
		await recordAudit(trx, { organisationId: opts.organisationId, actorUserId: opts.inviter.id, action: 'invitation.create', objectType: 'invitation', objectId: invitationId, after: { email, role: opts.role } });
		return { invitationId, url };
	});
}

export type InvitationState = { ok: true; invitation: InvitationRow; existingUser: boolean } | { ok: false; reason: string };

export async function checkInvitation(db: Knex, token: string): Promise<InvitationState> {
	const inv = await findInvitationByTokenHash(db, hashToken(token));
	if (!inv) return { ok: false, reason: 'This invitation link is not valid.' };
	if (inv.accepted_at) return { ok: false, reason: 'This invitation has already been used. Sign in instead.' };
	if (inv.revoked_at) return { ok: false, reason: 'This invitation was withdrawn. Ask your administrator for a new one.' };
	if (new Date(inv.expires_at).getTime() < Date.now()) return { ok: false, reason: 'This invitation has expired. Ask your administrator for a new one.' };
	return { ok: true, invitation: inv, existingUser: !!(await findUserByEmail(db, inv.email)) };
}

export const acceptInput = z.object({
	name: z.string().trim().min(2, 'Enter your name.').max(200),
	password: z.string().superRefine((p, ctx) => {
		const problem = passwordProblem(p);
		if (problem) ctx.addIssue({ code: 'custom', message: problem });
	})
});

/** Accepts an invitation: creates the user (or reuses an existing one) and the membership. */
export async function acceptInvitation(db: Knex, token: string, input: { name: string; password: string } | null): Promise<{ userId: number; email: string }> {
	const passwordHash = input ? await hashPassword(input.password) : null;
	return db.transaction(async (trx) => {
		const inv = await findInvitationByTokenHash(trx, hashToken(token), { forUpdate: true });
		if (!inv || inv.accepted_at || inv.revoked_at || new Date(inv.expires_at).getTime() < Date.now()) {
			throw new ServiceError(400, 'invalid_invitation', 'This invitation link is no longer valid.');
		}
		let user = await findUserByEmail(trx, inv.email);
		let userId: number;
		if (user) {
			userId = user.id;
		} else {
			if (!input || !passwordHash) throw new ServiceError(400, 'missing_fields', 'Enter your name and a password.');
			userId = await insertUser(trx, { email: inv.email, name: input.name, password_hash: passwordHash, email_verified_at: new Date() });
		}
		await setMembership(trx, inv.organisation_id, userId, inv.role);
		await markAccepted(trx, inv.id);
		await recordAudit(trx, { organisationId: inv.organisation_id, actorUserId: userId, action: 'invitation.accept', objectType: 'membership', objectId: userId, after: { role: inv.role } });
		return { userId, email: inv.email };
	});
}

export async function changeRole(db: Knex, organisationId: number, actorId: number, userId: number, role: Role): Promise<void> {
	await db.transaction(async (trx) => {
		const current = await membership(trx, organisationId, userId);
		if (!current) throw new ServiceError(404, 'not_found', 'This person is not a member.');
		if (current.role === role) return;
		if (current.role === 'admin' && (await countAdmins(trx, organisationId)) <= 1) {
			throw new ServiceError(409, 'last_admin', 'The organisation needs at least one administrator.');
		}
		await setMembership(trx, organisationId, userId, role);
		await recordAudit(trx, { organisationId, actorUserId: actorId, action: 'membership.role', objectType: 'membership', objectId: userId, before: { role: current.role }, after: { role } });
	});
}

export async function removeMember(db: Knex, organisationId: number, actorId: number, userId: number): Promise<void> {
	await db.transaction(async (trx) => {
		const current = await membership(trx, organisationId, userId);
		if (!current) throw new ServiceError(404, 'not_found', 'This person is not a member.');
		if (current.role === 'admin' && (await countAdmins(trx, organisationId)) <= 1) {
			throw new ServiceError(409, 'last_admin', 'The organisation needs at least one administrator.');
		}
		await removeMembership(trx, organisationId, userId);
		await recordAudit(trx, { organisationId, actorUserId: actorId, action: 'membership.remove', objectType: 'membership', objectId: userId, before: { role: current.role } });
	});
}

export async function withdrawInvitation(db: Knex, organisationId: number, actorId: number, invitationId: number): Promise<void> {
	await db.transaction(async (trx) => {
		const n = await revokeInvitation(trx, organisationId, invitationId);
		if (n === 0) throw new ServiceError(404, 'not_found', 'No such open invitation.');
		await recordAudit(trx, { organisationId, actorUserId: actorId, action: 'invitation.revoke', objectType: 'invitation', objectId: invitationId });
	});
}
