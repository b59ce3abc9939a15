/**
 * Headers every response carries: pages, the JSON API, /auth/*, error pages and static files.
 * Plain JavaScript so that both the server hook and the server entry (src/ops/serve.mjs, which
 * covers the static files SvelteKit serves before any hook runs) use this one table.
 *
 * Pages get their Content-Security-Policy from SvelteKit (`kit.csp` in svelte.config.js, with
 * nonces for its own scripts); everything else gets the strict fallback below. HSTS belongs at the
 * TLS proxy (see README).
 */

/** @type {Record<string, string>} */
export const SECURITY_HEADERS = {
	'X-Content-Type-Options': 'nosniff',
	'Referrer-Policy': 'same-origin',
	'X-Frame-Options': 'DENY',
	// The field view needs the position and the camera; nothing else, and nobody else's frames.
	'Permissions-Policy': 'geolocation=(self), camera=(self), microphone=(), payment=(), usb=(), interest-cohort=()',
	'Cross-Origin-Opener-Policy': 'same-origin'
};

/** For responses that are not SvelteKit pages (JSON, images, scripts, /auth/*). */
export const FALLBACK_CSP = "default-src 'none'; frame-ancestors 'none'; base-uri 'none'; form-action 'self'";

/**
 * For the service worker's script (/service-worker.js): a worker's own response CSP governs what
 * it may fetch, so it may reach this origin (to keep the route page, its data and the backdrop for
 * the technician offline) and nothing else.
 */
export const SERVICE_WORKER_CSP = "default-src 'none'; connect-src 'self'; img-src 'self'; frame-ancestors 'none'; base-uri 'none'";

/**
 * Sets the headers on a Fetch API Headers object, keeping a Content-Security-Policy already there.
 * @param {Headers} headers
 */
export function applySecurityHeaders(headers) {
	for (const [name, value] of Object.entries(SECURITY_HEADERS)) headers.set(name, value);
	if (!headers.has('Content-Security-Policy')) headers.set('Content-Security-Policy', FALLBACK_CSP);
}
