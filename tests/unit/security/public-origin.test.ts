import { describe, expect, it } from 'vitest';
import { isLoopbackHost, originIsLoopback, publicOrigin, publicUrl, sameOriginPath, signInLinkOnOrigin } from '../../../src/lib/server/http/public-origin';

const ORIGIN = 'https://cairnfield.example.org';

describe('publicOrigin and publicUrl', () => {
	it('build links from ORIGIN alone', () => {
		expect(publicOrigin({ ORIGIN: 'https://cairnfield.example.org/' })).toBe(ORIGIN);
		expect(publicUrl('/reset/abc', { ORIGIN })).toBe(`${ORIGIN}/reset/abc`);
	});
	it('refuse to guess when ORIGIN is unset, and refuse anything but a path', () => {
		expect(() => publicOrigin({})).toThrow(/ORIGIN is not set/);
		expect(() => publicUrl('//evil.example/x', { ORIGIN })).toThrow();
		expect(() => publicUrl('https://evil.example/x', { ORIGIN })).toThrow();
	});
});

describe('sameOriginPath (open redirects)', () => {
	// Browsers treat "\" like "/" in special URLs (WHATWG URL Standard, "special authority slashes"),
	// so "/\evil.example" is the host evil.example.
	it.each([
		['/%5Cevil.example', '/%5Cevil.example'], // percent-encoded stays a path on this site
		['/networks/3?tab=map', '/networks/3?tab=map'],
		[`${ORIGIN}/profile`, '/profile'],
		// A same-scheme relative reference resolves against the base (RFC 3986, 5.2.2: "https:g" is "https://a/b/c/g" for a non-strict parser; WHATWG URL does the same).
		['https:evil.example', '/evil.example']
	])('keeps %s on this site', (target, expected) => {
		expect(sameOriginPath(target, '/networks', ORIGIN)).toBe(expected);
	});
	it.each(['/\\evil.example', '//evil.example', '\\\\evil.example', 'https://evil.example/', 'javascript:alert(1)', '/\t/evil.example', 'http://cairnfield.example.org/x', ''])(
		'refuses %j',
		(target) => {
			expect(sameOriginPath(target, '/networks', ORIGIN)).toBe('/networks');
		}
	);
	it('resolves what a browser would resolve before judging', () => {
		// new URL('/%5Cevil.example', origin) stays on origin (the backslash is encoded), a browser agrees.
		expect(new URL(sameOriginPath('/%5Cevil.example', '/x', ORIGIN), ORIGIN).origin).toBe(ORIGIN);
	});
});

describe('signInLinkOnOrigin', () => {
	it('puts Auth.js path and token on ORIGIN, and drops a foreign callback host', () => {
		const forged = 'http://evil.example/auth/callback/link?callbackUrl=http%3A%2F%2Fevil.example%2Fnetworks&token=t0k&email=r%40x.test';
		const link = new URL(signInLinkOnOrigin(forged, ORIGIN));
		expect(link.origin).toBe(ORIGIN);
		expect(link.pathname).toBe('/auth/callback/link');
		expect(link.searchParams.get('token')).toBe('t0k');
		expect(link.searchParams.get('email')).toBe('r@x.test');
		expect(link.searchParams.get('callbackUrl')).toBe(`${ORIGIN}/networks`);
	});
});

describe('loopback', () => {
	it('knows this machine from elsewhere', () => {
		for (const h of ['127.0.0.1', '127.1.2.3', 'localhost', '[::1]', '::ffff:127.0.0.1']) expect(isLoopbackHost(h)).toBe(true);
		for (const h of ['10.0.0.1', 'cairnfield.example.org', '0.0.0.0', '128.0.0.1', 'localhost.evil.example']) expect(isLoopbackHost(h)).toBe(false);
		expect(originIsLoopback({ ORIGIN: 'http://127.0.0.1:3000' })).toBe(true);
		expect(originIsLoopback({ ORIGIN })).toBe(false);
		expect(originIsLoopback({})).toBe(false);
	});
});
