import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler, ApiError } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { appOrigin } from '$lib/server/mail/origin';
import { kickOutbox } from '$lib/server/mail/outbox';
import { getRevisionView } from '$lib/server/services/proposals';
import { submitRevision } from '$lib/server/services/reviews';

/** POST /api/v1/networks/:id/revisions/:revisionId/submit {note?} → 200 the revision (409 unless a draft) */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'proposal.edit');
	const text = await event.request.text();
	let body: unknown = {};
	try {
		if (text.trim()) body = JSON.parse(text);
	} catch {
		throw new ApiError(400, 'invalid_json', 'The request body is not valid JSON.');
	}
	const db = getDb();
	const id = Number(event.params.revisionId);
	await submitRevision(db, network, actor, id, body, appOrigin());
	void kickOutbox().catch(() => undefined);
	return json(await getRevisionView(db, network.id, id));
});
