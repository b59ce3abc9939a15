/** Sessions, sign-in checks, mail and housekeeping against a throwaway MariaDB. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadActor } from '../../src/lib/server/auth/actor';
import { checkPassword } from '../../src/lib/server/auth/credentials';
import { hashPassword } from '../../src/lib/server/auth/password';
import { markSent, enqueueMail, purgeFailedMail } from '../../src/lib/server/repositories/outbox';
import { changePassword, completePasswordReset, requestPasswordReset, resetTokenValid } from '../../src/lib/server/services/passwords';
import { disableAccount, signOutEverywhere } from '../../src/lib/server/services/sessions';
import { JOBS_KEEP_DAYS, jobsKeepDays, runHousekeeping, sweepAbandonedUploads, UPLOAD_GRACE_MINUTES } from '../../src/lib/server/services/housekeeping';
import { purgeEndedJobs } from '../../src/lib/server/jobs';
import { createNetwork, networkPage } from '../../src/lib/server/services/networks';
import { seed } from '../../seeds/demo';
import { createTestDatabase, makeMember, type TestDb } from '../helpers/db';
import { fsTestStore, type TestStore } from './layers-support';

describe('security', () => {
	let t: TestDb;
	let s: TestStore;
	beforeAll(async () => {
		process.env.ORIGIN = 'https://cairnfield.example.org';
		t = await createTestDatabase();
		s = await fsTestStore();
	});
	afterAll(async () => {
		await s?.close();
		await t?.drop();
	});

	const versionOf = async (userId: number) => Number((await t.db('users').where({ id: userId }).first()).session_version);
	const resetTokens = async (email: string) => (await t.db('outbox_messages').where({ to_address: email }).orderBy('id')).map((m: { text_body: string }) => /\/reset\/(\S+)/.exec(m.text_body)![1]);

	describe('sessions end at once', () => {
		it('a session carries the version it began with; sign out everywhere ends it', async () => {
			const m = await makeMember(t.db, 'reviewer');
			const v = await versionOf(m.userId);
			expect(await loadActor(t.db, m.userId, v)).toMatchObject({ id: m.userId });
			await signOutEverywhere(t.db, m.userId);
			expect(await loadActor(t.db, m.userId, v)).toBeNull();
			expect(await loadActor(t.db, m.userId, v + 1)).toMatchObject({ id: m.userId });
			expect(await t.db('audit_log').where({ action: 'sessions.revoke', object_id: String(m.userId) }).first()).toBeTruthy();
		});

		it('a password change ends every session and every open reset link', async () => {
			const m = await makeMember(t.db, 'analyst');
			await t.db('users').where({ id: m.userId }).update({ password_hash: await hashPassword('old-password-1') });
			await requestPasswordReset(t.db, m.email);
			const [token] = await resetTokens(m.email);
			const v = await versionOf(m.userId);
			await changePassword(t.db, m.userId, 'old-password-1', 'new-password-22');
			expect(await loadActor(t.db, m.userId, v)).toBeNull();
			expect(await resetTokenValid(t.db, token)).toBe(false);
		});

		it('a password reset ends every session and the other open reset links', async () => {
			const m = await makeMember(t.db, 'technician');
			await requestPasswordReset(t.db, m.email);
			await requestPasswordReset(t.db, m.email);
			const [first, second] = await resetTokens(m.email);
			const v = await versionOf(m.userId);
			await completePasswordReset(t.db, second, 'a-new-long-password');
			expect(await loadActor(t.db, m.userId, v)).toBeNull();
			expect(await resetTokenValid(t.db, first)).toBe(false);
			await expect(completePasswordReset(t.db, first, 'yet-another-password')).rejects.toMatchObject({ code: 'invalid_token' });
		});

		it('disabling an account ends its sessions', async () => {
			const m = await makeMember(t.db, 'analyst');
			const v = await versionOf(m.userId);
			await disableAccount(t.db, null, m.userId);
			expect(await loadActor(t.db, m.userId, v)).toBeNull();
			expect(await loadActor(t.db, m.userId, v + 1)).toBeNull(); // disabled: no session at all
		});
	});

	describe('password sign-in', () => {
		it('takes as long for an unknown e-mail as for a known one (bcrypt runs either way)', async () => {
			const m = await makeMember(t.db, 'analyst');
			await t.db('users').where({ id: m.userId }).update({ password_hash: await hashPassword('the-right-password') });
			await checkPassword(t.db, 'warm-up@example.test', 'x', '192.0.2.1'); // the throwaway hash is made once
			const time = async (email: string) => {
				const t0 = performance.now();
				for (let i = 0; i < 3; i++) await checkPassword(t.db, email, 'a-wrong-password', `192.0.2.${10 + i}`);
				return performance.now() - t0;
			};
			const known = await time(m.email);
			const unknown = await time('nobody-here@example.test');
			// bcrypt at cost 11 takes tens of milliseconds or more; skipping it takes about one query.
			expect(unknown).toBeGreaterThan(known * 0.6);
			expect(unknown).toBeLessThan(known * 1.6);
		});

		it('signs in with the right password and records the attempt by (e-mail, address)', async () => {
			const m = await makeMember(t.db, 'reviewer');
			await t.db('users').where({ id: m.userId }).update({ password_hash: await hashPassword('the-right-password') });
			expect(await checkPassword(t.db, m.email.toUpperCase(), 'the-right-password', '192.0.2.50')).toMatchObject({ ok: true });
			expect(await t.db('sign_in_attempts').where({ email_key: m.email, ip: '192.0.2.50', succeeded: true }).first()).toBeTruthy();
		});
	});

	describe('mail and clean-up', () => {
		it('clears a message body once it was sent, and purges old failures', async () => {
			const id = await enqueueMail(t.db, { to: 'a@example.test', subject: 'Link', text: 'https://cairnfield.example.org/reset/secret', html: '<a>secret</a>' });
			await markSent(t.db, id);
			const row = await t.db('outbox_messages').where({ id }).first();
			expect(row.status).toBe('sent');
			expect(row.text_body).toBeNull();
			expect(row.html_body).toBeNull();
			const old = await enqueueMail(t.db, { to: 'b@example.test', subject: 'Old', text: 'x' });
			await t.db('outbox_messages').where({ id: old }).update({ status: 'failed', created_at: new Date(Date.now() - 30 * 24 * 3600_000) });
			const recent = await enqueueMail(t.db, { to: 'c@example.test', subject: 'New', text: 'x' });
			await t.db('outbox_messages').where({ id: recent }).update({ status: 'failed' });
			expect(await purgeFailedMail(t.db, 14)).toBe(1);
			expect(await t.db('outbox_messages').where({ id: recent }).first()).toBeTruthy();
		});

		it('removes old sign-in attempts, expired sign-in links and interrupted uploads', async () => {
			const long = new Date(Date.now() - 30 * 24 * 3600_000);
			await t.db('sign_in_attempts').insert({ email_key: 'old@example.test', ip: '192.0.2.9', succeeded: false, created_at: long });
			await t.db('sign_in_attempts').insert({ email_key: 'new@example.test', ip: '192.0.2.9', succeeded: false });
			await t.db('verification_tokens').insert([
				{ identifier: 'old@example.test', token: 'expired', expires: new Date(Date.now() - 60_000) },
				{ identifier: 'new@example.test', token: 'fresh', expires: new Date(Date.now() + 60_000) }
			]);
			const analyst = await makeMember(t.db, 'analyst');
			const networkId = await createNetwork(t.db, analyst.organisationId, analyst.userId, { name: 'Sweep', description: '', crsEpsg: 32633, publicText: '' });
			// An upload the server never finished: its row and its stored object.
			await s.store.put('layers/crashed.tif', new Uint8Array([1, 2, 3]));
			const [crashed] = await t.db('layers').insert({ network_id: networkId, name: 'crashed', kind: 'other', units: '', platform: 'other', band: 1, original_name: '', storage_key: 'layers/crashed.tif', status: 'uploading', updated_at: new Date(Date.now() - (UPLOAD_GRACE_MINUTES + 5) * 60_000) });
			// One still arriving: kept.
			const [arriving] = await t.db('layers').insert({ network_id: networkId, name: 'arriving', kind: 'other', units: '', platform: 'other', band: 1, original_name: '', status: 'uploading' });
			const report = await runHousekeeping(t.db, s.store);
			expect(report).toMatchObject({ signInAttempts: 1, verificationTokens: 1, abandonedUploads: 1 });
			expect(await t.db('layers').where({ id: crashed }).first()).toBeUndefined();
			expect(await t.db('layers').where({ id: arriving }).first()).toBeTruthy();
			expect(await s.keys()).not.toContain('layers/crashed.tif');
			expect(await sweepAbandonedUploads(t.db, s.store)).toBe(0);
		});
	});

	describe('job retention', () => {
		it('removes jobs that ended before the retention period, and never a queued or running one', async () => {
			const day = 86_400_000;
			const at = (daysAgo: number) => new Date(Date.now() - daysAgo * day);
			const rows = [
				{ key: 'old-finished', state: 'finished', finished_at: at(JOBS_KEEP_DAYS + 1) },
				{ key: 'old-failed', state: 'failed', finished_at: at(JOBS_KEEP_DAYS + 1) },
				{ key: 'old-cancelled', state: 'cancelled', finished_at: at(JOBS_KEEP_DAYS + 5) },
				{ key: 'recent-finished', state: 'finished', finished_at: at(JOBS_KEEP_DAYS - 1) },
				{ key: 'old-queued', state: 'queued', finished_at: null },
				{ key: 'old-running', state: 'running', finished_at: null }
			];
			for (const r of rows) {
				await t.db('jobs').insert({ kind: 'retention-test', payload: '{}', state: r.state, idempotency_key: r.key, finished_at: r.finished_at, created_at: at(JOBS_KEEP_DAYS + 10), updated_at: r.finished_at ?? at(JOBS_KEEP_DAYS + 10) });
			}
			const report = await runHousekeeping(t.db, s.store);
			expect(report.endedJobs).toBe(3);
			const left = (await t.db('jobs').where({ kind: 'retention-test' }).select('idempotency_key')).map((r: { idempotency_key: string }) => r.idempotency_key).sort();
			expect(left).toEqual(['old-queued', 'old-running', 'recent-finished']);
			expect(jobsKeepDays({ JOBS_KEEP_DAYS: '7' })).toBe(7);
			expect(jobsKeepDays({ JOBS_KEEP_DAYS: 'soon' })).toBe(JOBS_KEEP_DAYS);
			await expect(purgeEndedJobs(t.db, 0)).rejects.toThrow(RangeError);
		});
	});

	describe('lists and seeds', () => {
		it('pages the network list and leaves geometry out', async () => {
			const admin = await makeMember(t.db, 'admin');
			for (let i = 0; i < 12; i++) await createNetwork(t.db, admin.organisationId, admin.userId, { name: `Paged ${String(i).padStart(2, '0')}`, description: '', crsEpsg: 32633, publicText: '' });
			const first = await networkPage(t.db, [admin.organisationId], new URLSearchParams({ perPage: '10' }));
			expect(first).toMatchObject({ total: 12, page: 1, pages: 2, perPage: 10 });
			expect(first.networks).toHaveLength(10);
			expect(first.networks[0]).not.toHaveProperty('studyArea');
			expect(first.networks[0]).not.toHaveProperty('exclusions');
			const second = await networkPage(t.db, [admin.organisationId], new URLSearchParams({ perPage: '10', page: '2' }));
			expect(second.networks.map((n) => n.name)).toEqual(['Paged 10', 'Paged 11']);
			// Anything but 10, 25, 50 or 100 a page falls back to 50.
			expect((await networkPage(t.db, [admin.organisationId], new URLSearchParams({ perPage: '100000' }))).perPage).toBe(50);
		});

		it('the demo seed can leave the demo users out', async () => {
			const other = await createTestDatabase();
			try {
				await seed(other.db, { users: false });
				expect(await other.db('users').count({ n: '*' }).first()).toEqual({ n: 0 });
				expect(await other.db('networks').count({ n: '*' }).first()).toEqual({ n: 1 });
			} finally {
				await other.drop();
			}
		});
	});
});
