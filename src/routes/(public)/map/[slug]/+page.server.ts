import { error } from '@sveltejs/kit';
import type { PageServerLoad } from './$types';
import { getDb } from '$lib/server/db';
import { getObjectStore } from '$lib/server/storage/app-store';
import { appOrigin } from '$lib/server/mail/origin';
import { ServiceError } from '$lib/server/services/errors';
import { cachedPublicMap, publicWebMap } from '$lib/server/services/public-map';
import { basemapSettings } from '$lib/server/http/basemap';
import { importanceSource } from '../../../api/v1/networks/[id=id]/map/importance-source';

// Public: no sign-in. Only the public map's own fields reach the page (see services/public-map).
export const load = (async (event) => {
	try {
		const map = await cachedPublicMap(getDb(), event.params.slug, importanceSource(), getObjectStore());
		// Only with a basemap set: what the page needs to become a web map over it in the browser.
		const web = basemapSettings() ? await publicWebMap(getDb(), event.params.slug, importanceSource(), getObjectStore()) : null;
		return { map, web, shareUrl: `${appOrigin()}/map/${map.network.slug}` };
	} catch (e) {
		if (e instanceof ServiceError && e.status === 404) error(404, 'No such public map.');
		throw e;
	}
}) satisfies PageServerLoad;
