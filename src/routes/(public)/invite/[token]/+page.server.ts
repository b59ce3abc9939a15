import { fail, redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { getDb } from '$lib/server/db';
import { formFields, parseForm, serviceFailure } from '$lib/server/forms';
import { acceptInput, acceptInvitation, checkInvitation } from '$lib/server/services/members';
import { ROLE_LABELS } from '$lib/roles';

export const load = (async ({ params, locals }) => {
	const state = await checkInvitation(getDb(), params.token);
	if (!state.ok) return { valid: false as const, reason: state.reason };
	const org = await getDb()('organisations').select('name').where({ id: state.invitation.organisation_id }).first();
	return {
		valid: true as const,
		email: state.invitation.email,
		role: ROLE_LABELS[state.invitation.role],
		organisation: org?.name ?? '',
		existingUser: state.existingUser,
		signedInAs: locals.actor?.email ?? null
	};
}) satisfies PageServerLoad;

export const actions = {
	default: async ({ request, params, locals }) => {
		const db = getDb();
		const state = await checkInvitation(db, params.token);
		if (!state.ok) return fail(400, { errors: { _: state.reason } });
		if (state.existingUser) {
			// An existing account joins by signing in as that account first.
			if (locals.actor?.email !== state.invitation.email) return fail(403, { errors: { _: `Sign in as ${state.invitation.email} first, then open the link again.` } });
			try {
				await acceptInvitation(db, params.token, null);
			} catch (err) {
				return serviceFailure(err);
			}
			redirect(303, '/networks');
		}
		const values = formFields(await request.formData(), ['name', 'password']);
		const parsed = parseForm(acceptInput, values, ['name']);
		if (!parsed.ok) return parsed.failure;
		try {
			await acceptInvitation(db, params.token, parsed.data);
		} catch (err) {
			return serviceFailure(err, { name: values.name ?? '' });
		}
		redirect(303, '/signin?welcome=1');
	}
} satisfies Actions;
