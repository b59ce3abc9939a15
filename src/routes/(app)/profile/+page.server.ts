import { fail, redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { getDb } from '$lib/server/db';
import { requireActor } from '$lib/server/auth/guard';
import { serviceFailure } from '$lib/server/forms';
import { changePassword } from '$lib/server/services/passwords';
import { renameUser } from '$lib/server/services/profile';
import { signOutEverywhere } from '$lib/server/services/sessions';

export const load = (async (event) => {
	const actor = requireActor(event);
	return { name: actor.name, email: actor.email, memberships: actor.memberships.map((m) => ({ organisation: m.organisation_name, role: m.role })) };
}) satisfies PageServerLoad;

export const actions = {
	name: async (event) => {
		const actor = requireActor(event);
		const name = String((await event.request.formData()).get('name') ?? '');
		try {
			await renameUser(getDb(), actor.id, name);
		} catch (err) {
			return serviceFailure(err);
		}
		return { saved: 'name' };
	},
	password: async (event) => {
		const actor = requireActor(event);
		const data = await event.request.formData();
		const next = String(data.get('password') ?? '');
		if (next !== String(data.get('confirm') ?? '')) return fail(400, { errors: { confirm: 'The two passwords differ.' } });
		try {
			await changePassword(getDb(), actor.id, String(data.get('current') ?? ''), next);
		} catch (err) {
			return serviceFailure(err);
		}
		// A new password ends every session, this one too.
		redirect(303, '/signin?ended=password');
	},
	signOutEverywhere: async (event) => {
		const actor = requireActor(event);
		await signOutEverywhere(getDb(), actor.id);
		redirect(303, '/signin?ended=everywhere');
	}
} satisfies Actions;
