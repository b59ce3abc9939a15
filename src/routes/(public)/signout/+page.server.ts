import { redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';

export const load = (async () => redirect(303, '/')) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		await event.locals.signOut({ redirectTo: '/signin' });
	}
} satisfies Actions;
