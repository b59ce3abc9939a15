import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler } from '$lib/server/api/errors';
import { cachedPublicMap } from '$lib/server/services/public-map';
import { importanceSource } from '../../../networks/[id=id]/map/importance-source';

/**
 * GET /api/v1/public/networks/:slug → the public map's data, no sign-in: {network: {slug, name,
 * publicText}, plan: {approvedAt}, sites: [{lon, lat, x, y, radiusM, type}], coverage, importance, …}.
 * An unpublished or unknown network is a 404.
 */
export const GET: RequestHandler = apiHandler(async (event) => {
	const map = await cachedPublicMap(getDb(), event.params.slug ?? '', importanceSource());
	return json(map, { headers: { 'cache-control': 'public, max-age=60' } });
});
