import { ApiError } from '$lib/server/api/errors';
import { WEB_MAP_EPSG } from '$lib/map/web-map';

/** The `epsg` query of an importance image: absent (the working CRS) or 3857 (the web map); anything else is a 400. */
export function imageEpsgParam(url: URL): number | undefined {
	const v = url.searchParams.get('epsg');
	if (v === null || v === '') return undefined;
	if (v !== String(WEB_MAP_EPSG)) throw new ApiError(400, 'invalid_epsg', `The importance image is drawn in the working CRS (no epsg) or in EPSG:${WEB_MAP_EPSG}; not ${JSON.stringify(v.slice(0, 20))}.`);
	return WEB_MAP_EPSG;
}
