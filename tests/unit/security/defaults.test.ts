import { describe, expect, it } from 'vitest';
import { devInboxDir } from '../../../src/lib/server/mail/dev-inbox';
import { demoUsersWanted } from '../../../seeds/demo';
import { passwordProblem, PASSWORD_MAX_BYTES } from '../../../src/lib/server/auth/password';
import { applySecurityHeaders, FALLBACK_CSP } from '../../../src/lib/server/http/security-headers.js';

describe('the development inbox', () => {
	const local = { DEV_INBOX: 'true', DEV_MAIL_DIR: '/tmp/mail', ORIGIN: 'http://127.0.0.1:3000', NODE_ENV: 'development' };
	it('is on only when asked for, outside production, on a loopback ORIGIN', () => {
		expect(devInboxDir(local)).toBe('/tmp/mail');
		expect(devInboxDir({ ...local, DEV_INBOX: undefined })).toBeNull();
		expect(devInboxDir({ ...local, NODE_ENV: 'production' })).toBeNull();
		// Behind a same-host reverse proxy every request comes from 127.0.0.1: the ORIGIN decides.
		expect(devInboxDir({ ...local, ORIGIN: 'https://cairnfield.example.org' })).toBeNull();
		expect(devInboxDir({ ...local, ORIGIN: undefined })).toBeNull();
	});
});

describe('the demo users', () => {
	it('are created for a loopback ORIGIN only, unless asked for, and then with a loud warning', () => {
		expect(demoUsersWanted('http://127.0.0.1:3000', {})).toEqual({ users: true, warning: null });
		expect(demoUsersWanted('http://localhost:5173', {})).toEqual({ users: true, warning: null });
		const remote = demoUsersWanted('https://cairnfield.example.org', {});
		expect(remote.users).toBe(false);
		expect(remote.warning).toMatch(/skipped/);
		const forced = demoUsersWanted('https://cairnfield.example.org', { SEED_DEMO_USERS: 'true' });
		expect(forced.users).toBe(true);
		expect(forced.warning).toMatch(/^WARNING: demo users with published passwords/);
		expect(demoUsersWanted('http://127.0.0.1:3000', { SEED_DEMO_USERS: 'false' }).users).toBe(false);
	});
});

describe('passwordProblem', () => {
	it('refuses passwords that bcrypt would cut at 72 bytes', () => {
		// bcrypt uses at most 72 bytes of the key (Provos & Mazières 1999, "A Future-Adaptable Password Scheme") [from memory].
		expect(PASSWORD_MAX_BYTES).toBe(72);
		expect(passwordProblem('a'.repeat(72))).toBeNull();
		expect(passwordProblem('a'.repeat(73))).toMatch(/at most 72 bytes/);
		// "é" is two bytes in UTF-8 (RFC 3629): 37 of them are 74 bytes.
		expect(passwordProblem('é'.repeat(36))).toBeNull();
		expect(passwordProblem('é'.repeat(37))).toMatch(/at most 72 bytes/);
		expect(passwordProblem('short')).toMatch(/at least 10/);
	});
});

describe('security headers', () => {
	it('are set, keeping a page CSP and adding the strict fallback elsewhere', () => {
		const h = new Headers();
		applySecurityHeaders(h);
		expect(h.get('X-Content-Type-Options')).toBe('nosniff');
		expect(h.get('Permissions-Policy')).toContain('geolocation=(self)');
		expect(h.get('Permissions-Policy')).toContain('camera=(self)');
		expect(h.get('Content-Security-Policy')).toBe(FALLBACK_CSP);
		const page = new Headers({ 'Content-Security-Policy': "default-src 'self'" });
		applySecurityHeaders(page);
		expect(page.get('Content-Security-Policy')).toBe("default-src 'self'");
	});
});
