import type { LayoutServerLoad } from './$types';
import { roleAllows } from '$lib/server/auth/roles';
import { basemapView } from '$lib/server/http/basemap';

// Only what the navigation and the maps need. Authorization happens in each page's own load.
export const load = (async ({ locals }) => {
	const a = locals.actor;
	// The deployment's basemap (tile template, attribution) or null: the same for everyone, nothing private.
	const basemap = basemapView();
	if (!a) return { me: null, basemap };
	return {
		basemap,
		me: {
			name: a.name,
			email: a.email,
			roles: a.memberships.map((m) => ({ organisation: m.organisation_name, slug: m.organisation_slug, role: m.role })),
			canManageUsers: a.memberships.some((m) => roleAllows(m.role, 'users.manage'))
		}
	};
}) satisfies LayoutServerLoad;
