import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, readJson } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { appOrigin } from '$lib/server/mail/origin';
import { kickOutbox } from '$lib/server/mail/outbox';
import { getRevisionView } from '$lib/server/services/proposals';
import { decideRevision, decisionInput } from '$lib/server/services/reviews';

/**
 * POST /api/v1/networks/:id/revisions/:revisionId/reviews {decision: 'approve'|'reject', comment}
 *   → 200 the revision; 403 four_eyes for its author; 409 not_submitted when it is not waiting for review.
 */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'revision.review');
	const input = await readJson(event, decisionInput);
	const db = getDb();
	const id = Number(event.params.revisionId);
	await decideRevision(db, network, actor, id, input, appOrigin());
	void kickOutbox().catch(() => undefined);
	return json(await getRevisionView(db, network.id, id));
});
