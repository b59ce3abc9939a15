/**
 * The small map of a technician's route (the phone view and the printed sheet): the network's
 * working CRS and importance backdrop, framed on the tasks, each task a numbered dot.
 */
import type { Db } from '../db';
import { transformer } from '../../geo/crs';
import type { NetworkRow } from '../repositories/networks';
import { boundsOf, padBounds } from '../../geo/geometry';
import { networkMap, type ImportanceSource } from './map-data';
import { WEB_MAP_EPSG } from '../../map/web-map';
import type { WebMapExtras } from '../../api/client';
import type { TaskView } from './field-tasks';
import type { ObjectStore } from '../storage/object-store';

/**
 * With `web` (the deployment sets a basemap and the page can use it), also what the route map needs
 * to become a web map over the basemap in the browser: the proj4 definition and the importance
 * overlay in EPSG:3857.
 */
export async function routeMap(db: Db, network: NetworkRow, tasks: readonly TaskView[], importance: ImportanceSource, cache: ObjectStore, opts: { web?: boolean } = {}) {
	if (tasks.length === 0) return null;
	const doc = await networkMap(db, { network, importance, cache, apiBase: `/api/v1/networks/${network.id}` });
	if (!doc.crs) return null;
	const fwd = transformer(4326, doc.crs.epsg).forward;
	const dots = tasks.map((t) => {
		const [x, y] = fwd(t.target.lon, t.target.lat);
		return { x, y, label: String(t.order ?? ''), kind: t.state === 'done' ? ('site' as const) : ('target' as const) };
	});
	const b = boundsOf(dots.map((d) => [d.x, d.y]));
	if (!b) return null;
	let web: WebMapExtras | null = null;
	if (opts.web) {
		const w = await networkMap(db, { network, importance, cache, apiBase: `/api/v1/networks/${network.id}`, imageEpsg: WEB_MAP_EPSG });
		web = { proj4: doc.crs.proj4, overlay: w.backdrop?.kind === 'importance' ? { url: w.backdrop.url, epsg: w.backdrop.epsg, bounds: w.backdrop.bounds } : null };
	}
	return { extent: padBounds(b, 0.12, 150), dots, studyArea: doc.studyArea, overlay: doc.backdrop?.kind === 'importance' ? { url: doc.backdrop.url, bounds: doc.backdrop.bounds } : null, web };
}
