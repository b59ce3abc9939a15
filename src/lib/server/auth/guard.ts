/**
 * The one guard every load, action and endpoint calls. Pages: anonymous → redirect to sign-in,
 * forbidden → 403. API (/api/…): anonymous → 401, forbidden → 403, in the API error shape.
 */
import { error, redirect, type RequestEvent } from '@sveltejs/kit';
import { ApiError } from '../api/errors';
import type { Actor } from './actor';
import { roleIn } from './actor';
import { roleAllows, type Permission, type Role } from './roles';

function isApi(event: RequestEvent): boolean {
	return event.url.pathname.startsWith('/api/');
}

export function requireActor(event: RequestEvent): Actor {
	const actor = event.locals.actor;
	if (actor) return actor;
	if (isApi(event)) throw new ApiError(401, 'unauthenticated', 'Sign in first.');
	const back = event.url.pathname + event.url.search;
	redirect(303, `/signin?redirectTo=${encodeURIComponent(back)}`);
}

export function forbidden(event: RequestEvent, message = 'You do not have access to this.'): never {
	if (isApi(event)) throw new ApiError(403, 'forbidden', message);
	error(403, { message, code: 'forbidden' });
}

/** Checks that the actor holds `permission` in the organisation; returns the actor and role. */
export function requirePermission(event: RequestEvent, permission: Permission, organisationId: number): { actor: Actor; role: Role } {
	const actor = requireActor(event);
	const role = roleIn(actor, organisationId);
	if (!role || !roleAllows(role, permission)) forbidden(event);
	return { actor, role };
}

/** The organisations in which the actor holds `permission`. */
export function organisationsWith(actor: Actor, permission: Permission): number[] {
	return actor.memberships.filter((m) => roleAllows(m.role, permission)).map((m) => m.organisation_id);
}

/**
 * The organisation a page acts on: ?org=slug when the actor belongs to it, else the first one in
 * which the actor holds `permission`. 403 when there is none.
 */
export function currentOrganisation(event: RequestEvent, permission: Permission): { actor: Actor; organisationId: number; role: Role } {
	const actor = requireActor(event);
	const slug = event.url.searchParams.get('org');
	const candidates = actor.memberships.filter((m) => roleAllows(m.role, permission));
	const pick = slug ? candidates.find((m) => m.organisation_slug === slug) : candidates[0];
	if (!pick) forbidden(event);
	return { actor, organisationId: pick.organisation_id, role: pick.role };
}
