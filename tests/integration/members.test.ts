import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { acceptInvitation, changeRole, checkInvitation, inviteMember, removeMember } from '../../src/lib/server/services/members';
import { ServiceError } from '../../src/lib/server/services/errors';
import { createTestDatabase, jsonValue, makeMember, type TestDb } from '../helpers/db';

describe('members service', () => {
	let t: TestDb;
	beforeAll(async () => {
		process.env.ORIGIN = 'https://cairnfield.example.org';
		t = await createTestDatabase();
	});
	afterAll(async () => t?.drop());

	it('inviteMember writes the invitation, its e-mail and an audit entry together; acceptInvitation creates the account', async () => {
		const admin = await makeMember(t.db, 'admin');
		const { url } = await inviteMember(t.db, { organisationId: admin.organisationId, organisationName: 'Org', inviter: { id: admin.userId, name: 'Ada' }, email: 'New.Person@Example.test', role: 'reviewer' });
		// Built from ORIGIN, whatever else is going on.
		expect(url.startsWith('https://cairnfield.example.org/invite/')).toBe(true);
		const token = url.split('/invite/')[1];
		const mail = await t.db('outbox_messages').where({ to_address: 'new.person@example.test' }).first();
		expect(mail.text_body).toContain(url);
		expect(await t.db('audit_log').where({ action: 'invitation.create' }).first()).toBeTruthy();
		// The token is stored hashed, never as sent.
		expect(await t.db('invitations').where({ token_hash: token }).first()).toBeUndefined();

		const state = await checkInvitation(t.db, token);
		expect(state.ok).toBe(true);
		const { userId } = await acceptInvitation(t.db, token, { name: 'New Person', password: 'long-enough-password' });
		const m = await t.db('memberships').where({ user_id: userId, organisation_id: admin.organisationId }).first();
		expect(m.role).toBe('reviewer');
		await expect(acceptInvitation(t.db, token, { name: 'Again', password: 'long-enough-password' })).rejects.toBeInstanceOf(ServiceError);
	});

	it('inviting an existing member is refused and writes nothing', async () => {
		const admin = await makeMember(t.db, 'admin');
		const other = await makeMember(t.db, 'analyst', admin.organisationId);
		const before = Number((await t.db('outbox_messages').count({ n: '*' }).first())!.n);
		await expect(inviteMember(t.db, { organisationId: admin.organisationId, organisationName: 'Org', inviter: { id: admin.userId, name: 'A' }, email: other.email, role: 'analyst' })).rejects.toMatchObject({ code: 'already_member' });
		expect(Number((await t.db('outbox_messages').count({ n: '*' }).first())!.n)).toBe(before);
	});

	it('changeRole and removeMember keep at least one administrator', async () => {
		const admin = await makeMember(t.db, 'admin');
		await expect(changeRole(t.db, admin.organisationId, admin.userId, admin.userId, 'analyst')).rejects.toMatchObject({ code: 'last_admin' });
		await expect(removeMember(t.db, admin.organisationId, admin.userId, admin.userId)).rejects.toMatchObject({ code: 'last_admin' });
		const second = await makeMember(t.db, 'analyst', admin.organisationId);
		await changeRole(t.db, admin.organisationId, admin.userId, second.userId, 'admin');
		await changeRole(t.db, admin.organisationId, second.userId, admin.userId, 'technician');
		expect((await t.db('memberships').where({ user_id: admin.userId }).first()).role).toBe('technician');
		const audit = await t.db('audit_log').where({ action: 'membership.role', object_id: String(admin.userId) }).first();
		expect(jsonValue(audit.before)).toEqual({ role: 'admin' });
	});
});
