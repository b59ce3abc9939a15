import { redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { signOut } from '$lib/server/auth';

export const load = (async () => redirect(303, '/')) satisfies PageServerLoad;

export const actions = {
	default: signOut
} satisfies Actions;
