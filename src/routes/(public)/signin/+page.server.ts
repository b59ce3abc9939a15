import { fail, isRedirect, redirect, type RequestEvent } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { signIn } from '$lib/server/auth';
import { publicOrigin, sameOriginPath } from '$lib/server/http/public-origin';

/** A redirect target only when it resolves to this site (refuses //host, /\host and the like). */
function safeRedirect(target: unknown): string {
	return sameOriginPath(target, '/networks', publicOrigin());
}

const messages: Record<string, string> = {
	CredentialsSignin: 'That e-mail and password do not match an account.',
	credentials: 'That e-mail and password do not match an account.',
	rate_limited: 'Too many attempts from here. Wait a few minutes and try again, or reset your password.',
	Verification: 'That sign-in link has expired or was already used. Ask for a new one.',
	AccessDenied: 'You cannot sign in with that account.'
};

const ended: Record<string, string> = {
	password: 'Your password was changed and every session ended. Sign in with the new password.',
	everywhere: 'You were signed out everywhere. Sign in again on the devices you use.'
};

export const load = (async ({ locals, url }) => {
	if (locals.actor) redirect(303, safeRedirect(url.searchParams.get('redirectTo')));
	const code = url.searchParams.get('code') ?? url.searchParams.get('error');
	return {
		error: code ? (messages[code] ?? 'Signing in did not work. Try again.') : null,
		sent: url.searchParams.get('sent') === '1',
		ended: ended[url.searchParams.get('ended') ?? ''] ?? null,
		redirectTo: safeRedirect(url.searchParams.get('redirectTo') ?? url.searchParams.get('callbackUrl'))
	};
}) satisfies PageServerLoad;

/**
 * Auth.js's sign-in action reads the form from the request itself. The body was read once here, so
 * it gets a request of its own holding only the fields it needs (never a second copy of the body).
 */
function withFields(event: RequestEvent, fields: Record<string, string>): RequestEvent {
	const headers = new Headers(event.request.headers);
	headers.set('content-type', 'application/x-www-form-urlencoded');
	headers.delete('content-length');
	event.request = new Request(event.request.url, { method: 'POST', headers, body: new URLSearchParams(fields) });
	return event;
}

export const actions = {
	password: async (event) => {
		const data = await event.request.formData();
		const email = String(data.get('email') ?? '').trim();
		const password = String(data.get('password') ?? '');
		if (!email || !password) return fail(400, { form: 'password', email, message: 'Enter your e-mail and password.' });
		if (data.get('providerId') !== 'password') return fail(400, { form: 'password', email, message: 'Reload the page and try again.' });
		try {
			await signIn(withFields(event, { providerId: 'password', email, password, redirectTo: safeRedirect(data.get('redirectTo')) }));
		} catch (err) {
			if (isRedirect(err)) throw err;
			const code = (err as { code?: string }).code;
			if (code === 'rate_limited') return fail(429, { form: 'password', email, message: messages.rate_limited });
			if ((err as { type?: string }).type === 'CredentialsSignin') return fail(400, { form: 'password', email, message: messages.credentials });
			throw err;
		}
	},
	link: async (event) => {
		const data = await event.request.formData();
		const email = String(data.get('email') ?? '').trim();
		if (!/^[^\s@]+@[^\s@]+\.[^\s@]+$/.test(email) || email.length > 254) return fail(400, { form: 'link', email, message: 'Enter a valid e-mail address.' });
		if (data.get('providerId') !== 'link') return fail(400, { form: 'link', email, message: 'Reload the page and try again.' });
		try {
			await signIn(withFields(event, { providerId: 'link', email, redirectTo: safeRedirect(data.get('redirectTo')) }));
		} catch (err) {
			// Auth.js answers with its own "check your e-mail" page; show ours instead.
			if (isRedirect(err) && err.location.includes('verify-request')) redirect(303, '/signin?sent=1');
			throw err;
		}
	}
} satisfies Actions;
