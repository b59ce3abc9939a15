import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { hashPassword, verifyPassword } from '../../src/lib/server/auth/password';
import { FREE_FAILURES, isSignInBlocked, recordSignInAttempt, signInWaitSeconds, throttleDelaySeconds } from '../../src/lib/server/auth/rate-limit';
import { completePasswordReset, requestPasswordReset, resetTokenValid } from '../../src/lib/server/services/passwords';
import { createTestDatabase, makeMember, type TestDb } from '../helpers/db';

describe('passwords and sign-in limits', () => {
	let t: TestDb;
	beforeAll(async () => {
		process.env.ORIGIN = 'https://cairnfield.example.org';
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
		await requestPasswordReset(t.db, 'nobody@example.test');
		expect(await t.db('outbox_messages').where({ to_address: 'nobody@example.test' })).toHaveLength(0);
		await requestPasswordReset(t.db, m.email.toUpperCase());
		const mail = await t.db('outbox_messages').where({ to_address: m.email }).first();
		expect(mail.text_body).toContain('https://cairnfield.example.org/reset/');
		const token = /\/reset\/(\S+)/.exec(mail.text_body)![1];
		expect(await resetTokenValid(t.db, token)).toBe(true);
		await expect(completePasswordReset(t.db, token, 'short')).rejects.toMatchObject({ code: 'weak_password' });
		await completePasswordReset(t.db, token, 'a-new-long-password');
		const user = await t.db('users').where({ email: m.email }).first();
		expect(await verifyPassword('a-new-long-password', user.password_hash)).toBe(true);
		expect(await resetTokenValid(t.db, token)).toBe(false);
		await expect(completePasswordReset(t.db, token, 'another-long-password')).rejects.toMatchObject({ code: 'invalid_token' });
	});

	it('throttles one (e-mail, address) pair with growing delays and clears on success', async () => {
		// 2^(n - 3) s after the 3rd failure of the pair: 1 s, 2 s, 4 s, … up to 15 minutes (common practice, no source).
		expect([2, 3, 4, 5, 13, 40].map((n) => throttleDelaySeconds(n, FREE_FAILURES))).toEqual([0, 1, 2, 4, 900, 900]);
		for (let i = 0; i < FREE_FAILURES; i++) {
			expect(await isSignInBlocked(t.db, 'x@example.test', '10.0.0.1')).toBe(false);
			await recordSignInAttempt(t.db, 'x@example.test', '10.0.0.1', false);
		}
		expect(await isSignInBlocked(t.db, 'x@example.test', '10.0.0.1')).toBe(true);
		await recordSignInAttempt(t.db, 'x@example.test', '10.0.0.1', false);
		const wait = await signInWaitSeconds(t.db, 'x@example.test', '10.0.0.1');
		expect(wait).toBeGreaterThanOrEqual(1);
		expect(wait).toBeLessThanOrEqual(2);
		// The delay runs from the last failure: two seconds later the pair may try again.
		expect(await signInWaitSeconds(t.db, 'x@example.test', '10.0.0.1', Date.now() + 2_500)).toBe(0);
		await recordSignInAttempt(t.db, 'x@example.test', '10.0.0.2', true);
		expect(await isSignInBlocked(t.db, 'x@example.test', '10.0.0.1')).toBe(false);
	});

	it('failures from one address never lock the account for another address', async () => {
		for (let i = 0; i < 12; i++) await recordSignInAttempt(t.db, 'victim@example.test', '203.0.113.9', false);
		expect(await isSignInBlocked(t.db, 'victim@example.test', '203.0.113.9')).toBe(true);
		expect(await isSignInBlocked(t.db, 'victim@example.test', '198.51.100.4')).toBe(false);
	});
});
