/**
 * Deny by default, in the hook: a route that nobody mapped is forbidden; unknown paths are 404; a
 * route marked signed-in answers 401 (API) or redirects to sign-in (pages) without an actor,
 * whatever its handler would do. The exact permission is then checked by each handler (./guard).
 */
import { error, json, redirect, type Handle } from '@sveltejs/kit';
import { apiErrorBody } from '../api/errors';
import { ROUTE_ACCESS, type RouteAccess } from './route-access';

export function routeHandleFor(table: Record<string, RouteAccess>): Handle {
	return async ({ event, resolve }) => {
		const id = event.route.id;
		const isApi = event.url.pathname.startsWith('/api/');
		if (id === null) {
			if (isApi) return json(apiErrorBody('not_found', 'No such API route.'), { status: 404 });
			return resolve(event);
		}
		const access = table[id];
		if (!access) {
			if (isApi) return json(apiErrorBody('forbidden', 'This route is not open to anyone.'), { status: 403 });
			error(403, { message: 'This page is not open to anyone.', code: 'forbidden' });
		}
		if (access === 'signed-in' && !event.locals.actor) {
			if (isApi) return json(apiErrorBody('unauthenticated', 'Sign in first.'), { status: 401 });
			redirect(303, `/signin?redirectTo=${encodeURIComponent(event.url.pathname + event.url.search)}`);
		}
		return resolve(event);
	};
}

export const routeHandle = routeHandleFor(ROUTE_ACCESS);
