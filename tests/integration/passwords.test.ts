import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { hashPassword, verifyPassword } from '../../src/lib/server/auth/password';
import { isSignInBlocked, MAX_PER_EMAIL, recordSignInAttempt } from '../../src/lib/server/auth/rate-limit';
import { completePasswordReset, requestPasswordReset, resetTokenValid } from '../../src/lib/server/services/passwords';
import { createTestDatabase, makeMember, type TestDb } from '../helpers/db';

describe('passwords and sign-in limits', () => {
	let t: TestDb;
	beforeAll(async () => {
		t = await createTestDatabase();
	});
	afterAll(async () => t?.drop());

	it('hashes with bcrypt and verifies', async () => {
		const h = await hashPassword('correct horse battery');
		expect(h).toMatch(/^\$2[aby]\$11\$/); // bcrypt modular crypt format, cost 11
		expect(await verifyPassword('correct horse battery', h)).toBe(true);
		expect(await verifyPassword('wrong', h)).toBe(false);
		expect(await verifyPassword('anything', null)).toBe(false);
	});

	it('requestPasswordReset queues a mail for a known address only; the link works once', async () => {
		const m = await makeMember(t.db, 'analyst');
		await requestPasswordReset(t.db, 'nobody@example.test', 'http://app');
		expect(await t.db('outbox_messages').where({ to_address: 'nobody@example.test' })).toHaveLength(0);
		await requestPasswordReset(t.db, m.email.toUpperCase(), 'http://app');
		const mail = await t.db('outbox_messages').where({ to_address: m.email }).first();
		const token = /\/reset\/(\S+)/.exec(mail.text_body)![1];
		expect(await resetTokenValid(t.db, token)).toBe(true);
		await expect(completePasswordReset(t.db, token, 'short')).rejects.toMatchObject({ code: 'weak_password' });
		await completePasswordReset(t.db, token, 'a-new-long-password');
		const user = await t.db('users').where({ email: m.email }).first();
		expect(await verifyPassword('a-new-long-password', user.password_hash)).toBe(true);
		expect(await resetTokenValid(t.db, token)).toBe(false);
		await expect(completePasswordReset(t.db, token, 'another-long-password')).rejects.toMatchObject({ code: 'invalid_token' });
	});

	it(`blocks an e-mail after ${MAX_PER_EMAIL} failures and clears on success`, async () => {
		for (let i = 0; i < MAX_PER_EMAIL; i++) {
			expect(await isSignInBlocked(t.db, 'x@example.test', '10.0.0.1')).toBe(false);
			await recordSignInAttempt(t.db, 'x@example.test', '10.0.0.1', false);
		}
		expect(await isSignInBlocked(t.db, 'x@example.test', '10.0.0.2')).toBe(true);
		await recordSignInAttempt(t.db, 'x@example.test', '10.0.0.2', true);
		expect(await isSignInBlocked(t.db, 'x@example.test', '10.0.0.2')).toBe(false);
	});
});
