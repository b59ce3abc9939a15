/**
 * The one public origin of the app: `ORIGIN`, the URL users open. Every link that goes out in an
 * e-mail starts with it, and redirect targets are judged against it. Never derived from Host or
 * X-Forwarded-* headers, which any client can forge.
 */

export class OriginNotSet extends Error {
	constructor() {
		super('ORIGIN is not set: set it to the URL users open, e.g. https://cairnfield.example.org');
		this.name = 'OriginNotSet';
	}
}

export function publicOrigin(env: Record<string, string | undefined> = process.env): string {
	const value = env.ORIGIN?.trim();
	if (!value) throw new OriginNotSet();
	return new URL(value).origin;
}

/** An absolute URL on the public origin for a path (with its query), for e-mails. */
export function publicUrl(pathAndQuery: string, env: Record<string, string | undefined> = process.env): string {
	if (!pathAndQuery.startsWith('/') || pathAndQuery.startsWith('//')) throw new Error(`not a path on this site: ${pathAndQuery}`);
	return publicOrigin(env) + pathAndQuery;
}

/**
 * A redirect target on this site, as a path, or `fallback`. Accepts only what resolves to the
 * public origin: `/x`, or an absolute URL on ORIGIN; refuses `//host`, `/\host`, `https:host` and
 * anything else a browser would take to another site.
 */
export function sameOriginPath(target: unknown, fallback: string, origin: string): string {
	if (typeof target !== 'string' || target === '') return fallback;
	if (/[\u0000-\u001f\\]/.test(target)) return fallback;
	let resolved: URL;
	try {
		resolved = new URL(target, origin + '/');
	} catch {
		return fallback;
	}
	if (resolved.origin !== origin) return fallback;
	return resolved.pathname + resolved.search + resolved.hash;
}

/**
 * A sign-in link as it is mailed: Auth.js's path and query put on ORIGIN, whatever host the
 * request named, with its callbackUrl reduced to a path on this site.
 */
export function signInLinkOnOrigin(authUrl: string, origin: string): string {
	const given = new URL(authUrl);
	const link = new URL(given.pathname + given.search, origin);
	const callback = link.searchParams.get('callbackUrl');
	if (callback !== null) link.searchParams.set('callbackUrl', origin + sameOriginPath(callback, '/networks', origin));
	return link.href;
}

/** True for a loopback host name or address (127.0.0.0/8, ::1, localhost). */
export function isLoopbackHost(hostname: string): boolean {
	const h = hostname.replace(/^\[|\]$/g, '').toLowerCase();
	return h === 'localhost' || h.endsWith('.localhost') || h === '::1' || /^127(\.\d{1,3}){3}$/.test(h) || /^::ffff:127(\.\d{1,3}){3}$/.test(h);
}

/** True when ORIGIN is set and points at this machine only. */
export function originIsLoopback(env: Record<string, string | undefined> = process.env): boolean {
	try {
		return isLoopbackHost(new URL(publicOrigin(env)).hostname);
	} catch {
		return false;
	}
}
