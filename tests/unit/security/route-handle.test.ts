import { describe, expect, it } from 'vitest';
import { isHttpError, isRedirect, type RequestEvent } from '@sveltejs/kit';
import { routeHandleFor } from '../../../src/lib/server/auth/route-handle';

// A handler that forgot its guard answers 200 to anyone; the hook must not let it.
const careless = async () => new Response('secret', { status: 200 });
const table = { '/api/v1/things': 'signed-in', '/(app)/things': 'signed-in', '/(public)': 'public' } as const;

function event(routeId: string | null, path: string, actor: unknown = null): RequestEvent {
	return { route: { id: routeId }, url: new URL(`http://x${path}`), locals: { actor } } as unknown as RequestEvent;
}

async function outcome(e: RequestEvent): Promise<string> {
	try {
		const r = await routeHandleFor({ ...table })({ event: e, resolve: careless });
		return String(r.status);
	} catch (err) {
		if (isRedirect(err)) return `${err.status} ${err.location}`;
		if (isHttpError(err)) return String(err.status);
		throw err;
	}
}

describe('the route hook', () => {
	it('answers 401 for a signed-in API route without a session, whatever the handler does', async () => {
		expect(await outcome(event('/api/v1/things', '/api/v1/things'))).toBe('401');
	});
	it('redirects a signed-in page to sign-in without a session', async () => {
		expect(await outcome(event('/(app)/things', '/things?x=1'))).toBe('303 /signin?redirectTo=%2Fthings%3Fx%3D1');
	});
	it('lets the handler answer once there is an actor, and for public routes', async () => {
		expect(await outcome(event('/api/v1/things', '/api/v1/things', { id: 1 }))).toBe('200');
		expect(await outcome(event('/(public)', '/'))).toBe('200');
	});
	it('refuses routes nobody mapped', async () => {
		expect(await outcome(event('/api/v1/unmapped', '/api/v1/unmapped', { id: 1 }))).toBe('403');
		expect(await outcome(event('/(app)/unmapped', '/unmapped', { id: 1 }))).toBe('403');
	});
});
