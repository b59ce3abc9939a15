/**
 * Attacks tried against the running app: forged host headers on every flow that mails a link,
 * headers on every kind of response, oversized bodies, open redirects, ending sessions, and admin
 * forms that must act on the organisation shown.
 */
import http from 'node:http';
import { randomBytes } from 'node:crypto';
import { expect, test } from '@playwright/test';
import { createDb } from '../../src/lib/server/db/knex';
import type { CapturedMail } from '../../src/lib/server/mail/dev-inbox';
import { baseURL, contextFor, demoUser, gotoHydrated, signInPage, waitForMail } from './support';

const FORGED = { host: 'evil.example', 'x-forwarded-host': 'evil.example', 'x-forwarded-proto': 'https', 'x-forwarded-for': '203.0.113.66' };

/** A raw HTTP request: unlike fetch, Node's http lets a client name any Host, as an attacker can. */
function raw(method: string, path: string, headers: Record<string, string>, body?: string | Buffer | Buffer[]): Promise<{ status: number; headers: http.IncomingHttpHeaders; text: string }> {
	const url = new URL(baseURL);
	return new Promise((resolve, reject) => {
		let answered = false;
		const req = http.request({ host: url.hostname, port: url.port, path, method, headers }, (res) => {
			answered = true;
			const chunks: Buffer[] = [];
			res.on('data', (c: Buffer) => chunks.push(c));
			res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, text: Buffer.concat(chunks).toString('utf8') }));
		});
		// The server may answer (413) and close before the whole body went out: that answer counts.
		req.on('error', (e) => {
			if (!answered) reject(e);
		});
		if (Array.isArray(body)) {
			// One part at a time (chunked, or under a content-length header), stopping once the server
			// has answered: a body written whole races the server's early 413 and close (EPIPE).
			void (async () => {
				for (const part of body) {
					if (answered || req.destroyed) return;
					await new Promise((r) => req.write(part, r));
					await new Promise((r) => setTimeout(r, 10));
				}
				req.end();
			})();
			return;
		}
		if (body !== undefined) req.write(body);
		req.end();
	});
}

/** A body cut into 64 KiB parts, for raw(), which stops sending once the server has answered. */
function parts(body: string): Buffer[] {
	const b = Buffer.from(body);
	const out: Buffer[] = [];
	for (let i = 0; i < b.length; i += 64 * 1024) out.push(b.subarray(i, i + 64 * 1024));
	return out;
}

function form(fields: Record<string, string>): string {
	return new URLSearchParams(fields).toString();
}

/** Every link in the e-mail, from its text and its HTML. */
function linksIn(mail: CapturedMail): string[] {
	const all = `${mail.text}\n${mail.html ?? ''}`.match(/https?:\/\/[^\s"'<>]+/g) ?? [];
	return all.map((l) => l.replace(/&amp;/g, '&'));
}

function expectAllOnOrigin(mail: CapturedMail): void {
	const links = linksIn(mail);
	expect(links.length, 'the e-mail holds a link').toBeGreaterThan(0);
	for (const link of links) expect(link.startsWith(`${baseURL}/`), link).toBe(true);
	expect(`${mail.text}${mail.html}`).not.toContain('evil.example');
}

test.describe('every mailed link is built from ORIGIN, whatever the request headers say', () => {
	test('the sign-in link', async () => {
		const u = demoUser('reviewer');
		const t0 = Date.now() - 1000;
		const res = await raw('POST', '/signin?/link', { ...FORGED, origin: baseURL, 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html' }, form({ providerId: 'link', email: u.email, redirectTo: '/networks' }));
		expect([302, 303]).toContain(res.status);
		expect(res.headers.location ?? '').not.toContain('evil.example');
		const mail = await waitForMail(u.email, /sign-in link/, t0);
		expectAllOnOrigin(mail);
		expect(linksIn(mail)[0]).toContain('/auth/callback/link?');
	});

	test('the password reset link', async () => {
		const u = demoUser('technician');
		const t0 = Date.now() - 1000;
		const res = await raw('POST', '/reset', { ...FORGED, origin: baseURL, 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html' }, form({ email: u.email }));
		expect(res.status).toBe(200);
		expectAllOnOrigin(await waitForMail(u.email, /Reset your Cairnfield password/, t0));
	});

	test('the invitation link', async () => {
		const admin = await contextFor('admin');
		const cookie = (await admin.storageState()).cookies.map((c) => `${c.name}=${c.value}`).join('; ');
		const email = `forged.host.${Date.now()}@example.test`;
		const t0 = Date.now() - 1000;
		const res = await raw('POST', '/admin/users?/invite', { ...FORGED, origin: baseURL, cookie, 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html' }, form({ email, role: 'technician' }));
		expect(res.status).toBe(200);
		expectAllOnOrigin(await waitForMail(email, /invited/, t0));
		await admin.dispose();
	});
});

test.describe('headers on every response', () => {
	const common = (h: Record<string, string>) => {
		expect(h['x-content-type-options']).toBe('nosniff');
		expect(h['referrer-policy']).toBe('same-origin');
		expect(h['permissions-policy']).toContain('geolocation=(self)');
		expect(h['permissions-policy']).toContain('camera=(self)');
		expect(h['content-security-policy']).toContain("frame-ancestors 'none'");
	};

	test('pages get a CSP without inline script; images from self, data: and blob:', async ({ request }) => {
		const res = await request.get('/', { maxRedirects: 0 });
		const h = res.headers();
		common(h);
		const csp = h['content-security-policy'];
		const script = /script-src ([^;]*)/.exec(csp)![1];
		expect(script).toContain("'self'");
		expect(script).toMatch(/'nonce-[^']+'/);
		expect(script).not.toContain('unsafe-inline');
		expect(/img-src ([^;]*)/.exec(csp)![1].split(' ').sort()).toEqual(["'self'", 'blob:', 'data:']);
		// The page's own script runs under that policy: the sign-in form hydrates and works.
	});

	test('Auth.js routes, the API, error pages and static files get them too', async ({ request }) => {
		const home = await (await request.get('/')).text();
		const asset = /\/_app\/immutable\/[^"']+\.js/.exec(home)![0];
		for (const path of ['/auth/session', '/auth/csrf', '/api/v1/networks', '/no-such-page', '/favicon.svg', asset]) {
			const res = await request.get(path, { maxRedirects: 0 });
			common(res.headers());
		}
	});
});

test.describe('request bodies are bounded per route', () => {
	const big = 'x'.repeat(2 * 1024 * 1024);

	test('a 2 MiB form is refused with 413 before it is read', async () => {
		const res = await raw('POST', '/signin?/password', { origin: baseURL, 'content-type': 'application/x-www-form-urlencoded', 'content-length': String(big.length + 6), accept: 'application/json' }, parts(`email=${big}`));
		expect(res.status).toBe(413);
		expect(JSON.parse(res.text)).toMatchObject({ error: { code: 'too_large' } });
	});

	test('a chunked body without a length is cut off at the limit too, also on Auth.js routes', async () => {
		const parts = Array.from({ length: 40 }, () => Buffer.alloc(64 * 1024, 0x61));
		const res = await raw('POST', '/auth/callback/password', { origin: baseURL, 'content-type': 'application/x-www-form-urlencoded', 'transfer-encoding': 'chunked', accept: 'application/json' }, parts);
		expect(res.status).toBe(413);
	});

	test('JSON to the API gets the API error shape', async () => {
		const admin = await contextFor('admin');
		const cookie = (await admin.storageState()).cookies.map((c) => `${c.name}=${c.value}`).join('; ');
		await admin.dispose();
		const body = JSON.stringify({ name: 'x', description: big });
		const res = await raw('POST', '/api/v1/networks', { origin: baseURL, cookie, 'content-type': 'application/json', 'content-length': String(Buffer.byteLength(body)), accept: 'application/json' }, parts(body));
		expect(res.status).toBe(413);
		expect(JSON.parse(res.text)).toMatchObject({ error: { code: 'too_large', message: expect.stringContaining('1024 kB') } });
	});
});

test('a redirect target must resolve to this site', async () => {
	const ctx = await contextFor('analyst');
	for (const target of ['/%5Cevil.example', '//evil.example', '/%09/evil.example', 'https://evil.example/']) {
		const res = await ctx.get(`/signin?redirectTo=${target}`, { headers: { accept: 'text/html' } });
		expect(res.status()).toBe(303);
		const location = res.headers()['location'];
		expect(new URL(location, baseURL).origin, `${target} → ${location}`).toBe(baseURL);
	}
	await ctx.dispose();
});

test('"sign out everywhere" ends every session of the user at once', async () => {
	const here = await contextFor('analyst');
	const there = await contextFor('analyst');
	expect((await there.get('/api/v1/networks', { headers: { accept: 'application/json' } })).status()).toBe(200);
	const res = await here.post('/profile?/signOutEverywhere', { form: {}, headers: { accept: 'text/html' } });
	expect(res.status()).toBe(303);
	expect(res.headers()['location']).toBe('/signin?ended=everywhere');
	for (const ctx of [here, there]) expect((await ctx.get('/api/v1/networks', { headers: { accept: 'application/json' } })).status()).toBe(401);
	// A new sign-in works as before.
	const again = await contextFor('analyst');
	expect((await again.get('/api/v1/networks', { headers: { accept: 'application/json' } })).status()).toBe(200);
	for (const ctx of [here, there, again]) await ctx.dispose();
});

test('the users page acts on the organisation it shows', async ({ page }) => {
	const url = process.env.DATABASE_URL;
	if (!url) throw new Error('DATABASE_URL is not set: run through npm test');
	const db = createDb(url, 1);
	const slug = `zz-second-${randomBytes(3).toString('hex')}`;
	const admin = demoUser('admin');
	try {
		// The demo administrator also administers a second organisation (sorted after the demo one).
		const [orgId] = await db('organisations').insert({ slug, name: `Zz Second Co-operative ${slug}` });
		const { id: adminId } = await db('users').select('id').where({ email: admin.email }).first();
		await db('memberships').insert({ organisation_id: orgId, user_id: adminId, role: 'admin' });

		await signInPage(page, admin.email, admin.password);
		await gotoHydrated(page, `/admin/users?org=${slug}`);
		await expect(page.getByRole('heading', { name: /Users of Zz Second/ })).toBeVisible();
		const email = `second.org.${Date.now()}@example.test`;
		await page.getByLabel('E-mail').fill(email);
		await page.getByLabel('Role').first().selectOption('reviewer');
		await page.getByRole('button', { name: 'Send invitation' }).click();
		await expect(page.getByText(`Invitation sent to ${email}`)).toBeVisible();
		const inv = await db('invitations').select('organisation_id').where({ email }).first();
		expect(inv.organisation_id).toBe(orgId);
	} finally {
		await db('organisations').where({ slug }).delete();
		await db.destroy();
	}
});

test('a sign-in link stays valid for 15 minutes, not a day', async () => {
	const u = demoUser('admin');
	const ctx = await contextFor(null);
	const t0 = Date.now();
	const res = await ctx.post('/signin?/link', { form: { providerId: 'link', email: u.email }, headers: { accept: 'text/html' } });
	expect(res.status()).toBe(303);
	const db = createDb(process.env.DATABASE_URL!, 1);
	try {
		const row = await db('verification_tokens').select('expires').where({ identifier: u.email }).orderBy('expires', 'desc').first();
		const minutes = (new Date(row.expires).getTime() - t0) / 60_000;
		expect(minutes).toBeGreaterThan(14);
		expect(minutes).toBeLessThanOrEqual(15.5);
	} finally {
		await db.destroy();
	}
	const mail = await waitForMail(u.email, /sign-in link/, t0 - 1000);
	expect(mail.text).toContain('expires in 15 minutes');
	await ctx.dispose();
});
