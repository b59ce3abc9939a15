import type { LayoutServerLoad } from './$types';
import { roleAllows } from '$lib/server/auth/roles';

// Only what the navigation needs. Authorization happens in each page's own load.
export const load = (async ({ locals }) => {
	const a = locals.actor;
	if (!a) return { me: null };
	return {
		me: {
			name: a.name,
			email: a.email,
			roles: a.memberships.map((m) => ({ organisation: m.organisation_name, slug: m.organisation_slug, role: m.role })),
			canManageUsers: a.memberships.some((m) => roleAllows(m.role, 'users.manage'))
		}
	};
}) satisfies LayoutServerLoad;
