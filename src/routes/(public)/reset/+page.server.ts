import { fail } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { getDb } from '$lib/server/db';
import { kickOutbox } from '$lib/server/mail/outbox';
import { requestPasswordReset } from '$lib/server/services/passwords';

export const load = (async () => ({})) satisfies PageServerLoad;

export const actions = {
	default: async ({ request }) => {
		const email = String((await request.formData()).get('email') ?? '').trim();
		if (!/^[^\s@]+@[^\s@]+\.[^\s@]+$/.test(email) || email.length > 254) return fail(400, { email, message: 'Enter a valid e-mail address.' });
		await requestPasswordReset(getDb(), email);
		// Delivery is not awaited: the answer must take as long whether or not the address exists.
		void kickOutbox().catch(() => {});
		return { sent: true };
	}
} satisfies Actions;
