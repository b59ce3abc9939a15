import { fail, redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { getDb } from '$lib/server/db';
import { serviceFailure } from '$lib/server/forms';
import { completePasswordReset, resetTokenValid } from '$lib/server/services/passwords';

export const load = (async ({ params }) => ({ valid: await resetTokenValid(getDb(), params.token) })) satisfies PageServerLoad;

export const actions = {
	default: async ({ request, params }) => {
		const data = await request.formData();
		const password = String(data.get('password') ?? '');
		const confirm = String(data.get('confirm') ?? '');
		if (password !== confirm) return fail(400, { errors: { confirm: 'The two passwords differ.' } });
		try {
			await completePasswordReset(getDb(), params.token, password);
		} catch (err) {
			return serviceFailure(err);
		}
		redirect(303, '/signin?reset=1');
	}
} satisfies Actions;
