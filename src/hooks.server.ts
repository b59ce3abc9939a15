import { error, json, type Handle, type HandleServerError, type ServerInit } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { authHandle } from '$lib/server/auth';
import { loadActor } from '$lib/server/auth/actor';
import { ROUTE_ACCESS } from '$lib/server/auth/route-access';
import { apiErrorBody } from '$lib/server/api/errors';
import { closeDb, getDb } from '$lib/server/db';
import { startOutboxTimer } from '$lib/server/mail/outbox';

/** Runs once when the server starts, before the first request (not when a build step imports this module). */
export const init: ServerInit = () => {
	startOutboxTimer();
};

// adapter-node emits this after it stopped accepting requests (SIGINT/SIGTERM): let the process exit.
process.on('sveltekit:shutdown', () => {
	void closeDb();
});

/** Re-reads the user and their roles from MariaDB on every request: a demoted user loses rights at once. */
const actorHandle: Handle = async ({ event, resolve }) => {
	event.locals.actor = null;
	const session = await event.locals.auth();
	const id = Number(session?.user?.id);
	if (Number.isInteger(id) && id > 0) event.locals.actor = await loadActor(getDb(), id);
	return resolve(event);
};

/** Deny by default: a route that nobody mapped is forbidden; unknown paths are 404. */
const routeHandle: Handle = async ({ event, resolve }) => {
	const id = event.route.id;
	const isApi = event.url.pathname.startsWith('/api/');
	if (id === null) {
		if (isApi) return json(apiErrorBody('not_found', 'No such API route.'), { status: 404 });
		return resolve(event);
	}
	const access = ROUTE_ACCESS[id];
	if (!access) {
		if (isApi) return json(apiErrorBody('forbidden', 'This route is not open to anyone.'), { status: 403 });
		error(403, { message: 'This page is not open to anyone.', code: 'forbidden' });
	}
	const response = await resolve(event);
	response.headers.set('X-Content-Type-Options', 'nosniff');
	response.headers.set('Referrer-Policy', 'same-origin');
	return response;
};

export const handle = sequence(authHandle, actorHandle, routeHandle);

export const handleError: HandleServerError = ({ error: err, status }) => {
	if (status !== 404) console.error(err);
	return { message: status === 404 ? 'This page does not exist.' : 'Something went wrong on our side. Please try again.', code: String(status) };
};
