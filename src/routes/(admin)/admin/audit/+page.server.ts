import type { PageServerLoad } from './$types';
import { getDb } from '$lib/server/db';
import { currentOrganisation } from '$lib/server/auth/guard';
import { recentAudit } from '$lib/server/repositories/audit';

export const load = (async (event) => {
	const { organisationId } = currentOrganisation(event, 'audit.view');
	return { entries: await recentAudit(getDb(), organisationId, 200) };
}) satisfies PageServerLoad;
