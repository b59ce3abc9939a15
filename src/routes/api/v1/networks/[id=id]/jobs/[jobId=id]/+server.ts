import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, ApiError } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { requirePermission } from '$lib/server/auth/guard';
import { cancelJob, getJob, jobView } from '$lib/server/jobs';
import { jobEditPermission, jobViewPermission } from '$lib/server/jobs/access';
import { registerBuiltInJobKinds } from '$lib/server/jobs/kinds';

// Cancelling a queued job runs its kind's failed hooks here (e.g. the layer is marked failed).
registerBuiltInJobKinds();

/** GET /api/v1/networks/:id/jobs/:jobId → {job: {id, kind, state, progress, result, error, …}}; who may see which kind: jobs/access.ts. */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'network.view');
	const job = await getJob(getDb(), Number(event.params.jobId), { networkId: network.id });
	if (!job) throw new ApiError(404, 'not_found', 'No such job.');
	requirePermission(event, jobViewPermission(job.kind), network.organisation_id);
	return json({ job: jobView(job) });
});

/** DELETE /api/v1/networks/:id/jobs/:jobId cancels the job (a running one stops within about a second) → {job}. */
export const DELETE: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'network.view');
	const db = getDb();
	const job = await getJob(db, Number(event.params.jobId), { networkId: network.id });
	if (!job) throw new ApiError(404, 'not_found', 'No such job.');
	requirePermission(event, jobViewPermission(job.kind), network.organisation_id);
	requirePermission(event, jobEditPermission(job.kind), network.organisation_id);
	const after = await cancelJob(db, job.id, { networkId: network.id });
	return json({ job: jobView(after!) });
});
