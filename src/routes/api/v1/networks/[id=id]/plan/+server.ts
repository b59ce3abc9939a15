import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, ApiError } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { currentPlanView } from '$lib/server/services/reviews';

/** GET /api/v1/networks/:id/plan → {revisionId, approvedAt, …}, or 404 while the network has none */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'plan.view');
	const plan = await currentPlanView(getDb(), network.id);
	if (!plan) throw new ApiError(404, 'no_plan', 'This network has no approved plan yet.');
	return json(plan);
});
