import { fail, isRedirect, redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { signIn } from '$lib/server/auth';

function safeRedirect(target: unknown): string {
	const t = typeof target === 'string' ? target : '';
	return t.startsWith('/') && !t.startsWith('//') ? t : '/networks';
}

const messages: Record<string, string> = {
	CredentialsSignin: 'That e-mail and password do not match an account.',
	credentials: 'That e-mail and password do not match an account.',
	rate_limited: 'Too many attempts. Wait 15 minutes, or reset your password.',
	Verification: 'That sign-in link has expired or was already used. Ask for a new one.',
	AccessDenied: 'You cannot sign in with that account.'
};

export const load = (async ({ locals, url }) => {
	if (locals.actor) redirect(303, safeRedirect(url.searchParams.get('redirectTo')));
	const code = url.searchParams.get('code') ?? url.searchParams.get('error');
	return {
		error: code ? (messages[code] ?? 'Signing in did not work. Try again.') : null,
		sent: url.searchParams.get('sent') === '1',
		redirectTo: safeRedirect(url.searchParams.get('redirectTo') ?? url.searchParams.get('callbackUrl')?.replace(/^https?:\/\/[^/]+/, ''))
	};
}) satisfies PageServerLoad;

export const actions = {
	password: async (event) => {
		// Auth.js's action reads the form itself, so validate a copy first.
		const data = await event.request.clone().formData();
		const email = String(data.get('email') ?? '').trim();
		const password = String(data.get('password') ?? '');
		if (!email || !password) return fail(400, { form: 'password', email, message: 'Enter your e-mail and password.' });
		if (data.get('providerId') !== 'password') return fail(400, { form: 'password', email, message: 'Reload the page and try again.' });
		try {
			await signIn(event);
		} catch (err) {
			if (isRedirect(err)) throw err;
			const code = (err as { code?: string }).code;
			if (code === 'rate_limited') return fail(429, { form: 'password', email, message: messages.rate_limited });
			if ((err as { type?: string }).type === 'CredentialsSignin') return fail(400, { form: 'password', email, message: messages.credentials });
			throw err;
		}
	},
	link: async (event) => {
		const data = await event.request.clone().formData();
		const email = String(data.get('email') ?? '').trim();
		if (!/^[^\s@]+@[^\s@]+\.[^\s@]+$/.test(email)) return fail(400, { form: 'link', email, message: 'Enter a valid e-mail address.' });
		if (data.get('providerId') !== 'link') return fail(400, { form: 'link', email, message: 'Reload the page and try again.' });
		try {
			await signIn(event);
		} catch (err) {
			// Auth.js answers with its own "check your e-mail" page; show ours instead.
			if (isRedirect(err) && err.location.includes('verify-request')) redirect(303, '/signin?sent=1');
			throw err;
		}
	}
} satisfies Actions;
