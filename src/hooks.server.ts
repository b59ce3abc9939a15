import { json, type Handle, type HandleServerError, type ServerInit } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { authHandle } from '$lib/server/auth';
import { loadActor } from '$lib/server/auth/actor';
import { routeHandle } from '$lib/server/auth/route-handle';
import { apiErrorBody } from '$lib/server/api/errors';
import { closeDb, getDb } from '$lib/server/db';
import { bodyLimitFor, boundBody } from '$lib/server/http/body-limit';
import { applySecurityHeaders } from '$lib/server/http/security-headers.js';
import { basemapSettings, loadBasemapSettings, withImageSource } from '$lib/server/http/basemap';
import { startOutboxTimer } from '$lib/server/mail/outbox';
import { startHousekeeping } from '$lib/server/services/housekeeping';
import { getObjectStore } from '$lib/server/storage/app-store';

/** Runs once when the server starts, before the first request (not when a build step imports this module). */
export const init: ServerInit = () => {
	// A malformed basemap setting stops the server here, with a message that says what to fix.
	loadBasemapSettings();
	startOutboxTimer();
	startHousekeeping(getDb, getObjectStore);
};

// adapter-node emits this after it stopped accepting requests (SIGINT/SIGTERM): let the process exit.
process.on('sveltekit:shutdown', () => {
	void closeDb();
});

function isApiPath(pathname: string): boolean {
	return pathname.startsWith('/api/');
}

/**
 * Runs first, around everything else (Auth.js's own /auth/* answers included): the security
 * headers on every response, and the body limit of the route before anyone reads the body.
 */
const boundaryHandle: Handle = async ({ event, resolve }) => {
	const limit = bodyLimitFor(event.route.id, event.request.method);
	const bounded = await boundBody(event.request, limit);
	let response: Response;
	if (!bounded.ok) {
		const message = `The request body is larger than the limit of ${Math.round(limit / 1024)} kB for this address.`;
		response = isApiPath(event.url.pathname) || !event.request.headers.get('accept')?.includes('text/html')
			? json(apiErrorBody('too_large', message), { status: 413 })
			: new Response(message, { status: 413, headers: { 'content-type': 'text/plain; charset=utf-8' } });
		response.headers.set('connection', 'close');
	} else {
		event.request = bounded.request;
		response = await resolve(event);
	}
	try {
		setHeaders(response.headers);
	} catch {
		// Immutable headers (a fetched response passed through): copy it.
		response = new Response(response.body, response);
		setHeaders(response.headers);
	}
	return response;
};

/** The security headers; a page's own CSP (SvelteKit's) also allows images from the basemap's origin when one is set. */
function setHeaders(headers: Headers) {
	const pageCsp = headers.get('content-security-policy');
	if (pageCsp) headers.set('content-security-policy', withImageSource(pageCsp, basemapSettings()?.origin ?? null));
	applySecurityHeaders(headers);
}

/**
 * Re-reads the user and their roles from MariaDB on every request: a demoted user loses rights at
 * once, and a session whose version is older than the user's (ended everywhere) counts for nothing.
 */
const actorHandle: Handle = async ({ event, resolve }) => {
	event.locals.actor = null;
	const session = await event.locals.auth();
	const id = Number(session?.user?.id);
	const version = (session as { sessionVersion?: unknown } | null)?.sessionVersion;
	if (Number.isInteger(id) && id > 0 && typeof version === 'number') event.locals.actor = await loadActor(getDb(), id, version);
	return resolve(event);
};

export const handle = sequence(boundaryHandle, authHandle, actorHandle, routeHandle);

export const handleError: HandleServerError = ({ error: err, status }) => {
	if (status !== 404) console.error(err);
	return { message: status === 404 ? 'This page does not exist.' : 'Something went wrong on our side. Please try again.', code: String(status) };
};
