/**
 * The public map of a published network: what anyone may see at /map/{slug} and through
 * /api/v1/public/networks/{slug}. Built from an explicit list of public fields only: the network's
 * name and public text, the date of its current plan, the plan's sensor sites (the as-installed
 * position once a site's task is done), optionally generalised to the centres of a coarser grid,
 * the sensor types' sensing radii, the study area, the importance overlay and a coverage summary.
 * Never people, e-mail addresses, serial numbers, sensor codes, drafts, tasks, notes or photos.
 */
import type { Db } from '../db';
import { transformer, type PointTransform } from '../../geo/crs';
import type { MapBounds, MapLegendStop, MapRings, WebMapExtras } from '$lib/api/client';
import type { NetworkRow } from '../repositories/networks';
import type { Footprint } from '../repositories/sensor-types';
import type { ObjectStore } from '../storage/object-store';
import { networkMap, importancePng, type ImportanceSource } from './map-data';
import { WEB_MAP_EPSG } from '../../map/web-map';
import type { RevisionMetrics, RevisionOutputs } from './placement';
import { ServiceError } from './errors';

/**
 * What a sensor type senses is its own setting (sensor_types.footprint), not read from its radius: a
 * cosmic-ray neutron sensor senses about 130–240 m around it (Köhli et al. 2015, Water Resources
 * Research) and is drawn as an area sensor with its own symbol; a point probe senses centimetres,
 * and its radius, a siting choice, may be larger still (the demo's probes stand for 1 km).
 */
export type { Footprint };

export interface PublicSite {
	lon: number;
	lat: number;
	/** Working-CRS metres (the map's drawing coordinates). */
	x: number;
	y: number;
	radiusM: number;
	type: string;
	/** `area`: a large-footprint sensor (e.g. cosmic-ray neutrons); `point`: a probe. */
	footprint: Footprint;
}

export interface PublicMap {
	network: { slug: string; name: string; publicText: string };
	plan: { approvedAt: string } | null;
	crs: { epsg: number } | null;
	extent: MapBounds | null;
	studyArea: MapRings;
	/** Grid cell size (m) the positions are generalised to; null = exact positions. */
	generalisedToM: number | null;
	sites: PublicSite[];
	sensorTypes: { name: string; radiusM: number; count: number; footprint: Footprint }[];
	coverage: { sensorCount: number; coverage: number | null; p95DistanceM: number | null; zones: { name: string; importanceShare: number | null; sensors: number }[] };
	importance: { url: string; bounds: MapBounds; min: number; max: number; legend: MapLegendStop[] } | null;
	/** The importance overlay is being drawn (a job); it appears on a later look. */
	importancePending: boolean;
}

const SLUG = /^[a-z0-9]+(?:-[a-z0-9]+)*$/;

/** The centre of the `cell`-metre grid cell that holds (x, y): the generalised position. */
export function generalise(x: number, y: number, cell: number): [number, number] {
	return [(Math.floor(x / cell) + 0.5) * cell, (Math.floor(y / cell) + 0.5) * cell];
}

export async function findPublishedNetwork(db: Db, slug: string): Promise<NetworkRow & { public_grid_m: number | null }> {
	if (!SLUG.test(slug) || slug.length > 64) throw new ServiceError(404, 'not_found', 'No such public map.');
	const row = await db('networks').select('id').where({ published_slug: slug }).first();
	if (!row) throw new ServiceError(404, 'not_found', 'No such public map.');
	const n = await db('networks').select('*').where({ id: row.id }).first();
	const parse = (v: unknown) => (typeof v === 'string' ? JSON.parse(v) : (v ?? null));
	return { ...n, study_area: parse(n.study_area), exclusions: parse(n.exclusions), public_grid_m: n.public_grid_m === null ? null : Number(n.public_grid_m) };
}

interface Candidate {
	lon: number;
	lat: number;
	radiusM: number;
	type: string;
	footprint: Footprint;
}

/** The current plan's sites, where a done task stands as installed; without a plan, the active inventory. */
async function candidateSites(db: Db, networkId: number): Promise<{ sites: Candidate[]; plan: { approvedAt: string; metrics: RevisionMetrics } | null }> {
	const plan = await db('plans as p').join('revisions as r', 'r.id', 'p.revision_id').select('p.id', 'p.approved_at', 'r.outputs', 'r.metrics').where({ 'p.network_id': networkId, 'p.state': 'current' }).first();
	const types = new Map<number, { name: string; radius: number; footprint: Footprint }>((await db('sensor_types').select('id', 'name', 'radius_m', 'footprint').where({ network_id: networkId })).map((t: { id: number; name: string; radius_m: number; footprint: Footprint }) => [t.id, { name: t.name, radius: Number(t.radius_m), footprint: t.footprint }]));
	if (!plan) {
		const rows = await db('sensors').select('lon', 'lat', 'sensor_type_id').where({ network_id: networkId, status: 'active' });
		return { plan: null, sites: rows.map((s: { lon: number; lat: number; sensor_type_id: number }) => ({ lon: Number(s.lon), lat: Number(s.lat), radiusM: types.get(s.sensor_type_id)?.radius ?? 0, type: types.get(s.sensor_type_id)?.name ?? '', footprint: types.get(s.sensor_type_id)?.footprint ?? 'point' })) };
	}
	const parse = (v: unknown) => (typeof v === 'string' ? JSON.parse(v) : v);
	const outputs = parse(plan.outputs) as RevisionOutputs;
	const done = new Map<string, { lon: number; lat: number }>(
		(await db('field_tasks').select('site', 'installed_lon', 'installed_lat').where({ plan_id: plan.id, state: 'done' }).whereNotNull('site').whereNotNull('installed_lon')).map((t: { site: string; installed_lon: number; installed_lat: number }) => [t.site, { lon: Number(t.installed_lon), lat: Number(t.installed_lat) }])
	);
	const sites = outputs.targets.features.map((f) => {
		const at = done.get(String(f.properties.site));
		const typeId = typeof f.properties.typeId === 'number' ? f.properties.typeId : null;
		return { lon: at?.lon ?? f.geometry.coordinates[0], lat: at?.lat ?? f.geometry.coordinates[1], radiusM: Number(f.properties.radiusM ?? 0), type: (typeId !== null ? types.get(typeId)?.name : undefined) ?? String(f.properties.type ?? ''), footprint: (typeId !== null ? types.get(typeId)?.footprint : undefined) ?? 'point' };
	});
	return { sites, plan: { approvedAt: new Date(plan.approved_at).toISOString(), metrics: parse(plan.metrics) as RevisionMetrics } };
}

export async function publicMap(db: Db, slug: string, importance: ImportanceSource, cache: ObjectStore): Promise<PublicMap> {
	const network = await findPublishedNetwork(db, slug);
	const apiBase = `/api/v1/public/networks/${network.slug}`;
	const doc = await networkMap(db, { network, importance, cache, apiBase, mayViewLayers: false });
	const { sites: candidates, plan } = await candidateSites(db, network.id);
	const grid = network.public_grid_m && network.public_grid_m > 0 ? network.public_grid_m : null;
	let sites: PublicSite[] = [];
	if (doc.crs) {
		const t = transformer(4326, doc.crs.epsg);
		const back: PointTransform = t.inverse;
		sites = candidates.map((c) => {
			let [x, y] = t.forward(c.lon, c.lat);
			let [lon, lat] = [c.lon, c.lat];
			if (grid) {
				[x, y] = generalise(x, y, grid);
				[lon, lat] = back(x, y);
			}
			return { lon, lat, x, y, radiusM: c.radiusM, type: c.type, footprint: c.footprint };
		});
		// Stable order that says nothing about codes or tasks.
		sites.sort((a, b) => a.x - b.x || a.y - b.y);
	}
	const counts = new Map<string, { name: string; radiusM: number; count: number; footprint: Footprint }>();
	for (const s of sites) {
		const k = `${s.type}|${s.radiusM}`;
		counts.set(k, { name: s.type, radiusM: s.radiusM, count: (counts.get(k)?.count ?? 0) + 1, footprint: s.footprint });
	}
	const zoneShares = new Map(doc.zones.map((z) => [z.code, z]));
	const b = doc.backdrop && doc.backdrop.kind === 'importance' ? doc.backdrop : null;
	return {
		network: { slug: network.slug, name: network.name, publicText: network.public_text },
		plan: plan ? { approvedAt: plan.approvedAt } : null,
		crs: doc.crs ? { epsg: doc.crs.epsg } : null,
		extent: doc.extent,
		studyArea: doc.studyArea,
		generalisedToM: grid,
		sites,
		sensorTypes: [...counts.values()],
		coverage: {
			sensorCount: sites.length,
			coverage: plan ? plan.metrics.coverage : null,
			p95DistanceM: plan ? plan.metrics.p95DistanceM : null,
			zones: plan ? plan.metrics.zones.map((z) => ({ name: zoneShares.get(z.id)?.name || z.id, importanceShare: zoneShares.get(z.id)?.importanceShare ?? null, sensors: z.sensors })) : []
		},
		importance: b ? { url: `${apiBase}/importance.png`, bounds: b.bounds, min: b.min, max: b.max, legend: b.legend } : null,
		importancePending: doc.importanceJob !== null && (doc.importanceJob.state === 'queued' || doc.importanceJob.state === 'running')
	};
}

/**
 * What the public map is made of, as one short string from one query: the network row's public
 * settings and geometry, the current plan, the done tasks (as-installed positions), the inventory
 * (a network with no plan shows it), the sensor types and the zones' shares. Null when no network
 * is published under `slug`. Order-independent sums of CRC32s stand for the small tables, so no
 * GROUP_CONCAT is cut short.
 */
export async function publicMapFingerprint(db: Db, slug: string): Promise<{ fingerprint: string; hasRecipe: boolean } | null> {
	if (!SLUG.test(slug) || slug.length > 64) return null;
	const [rows] = await db.raw(
		`SELECT CONCAT_WS('|', n.id, n.version, n.updated_at, n.slug, MD5(n.name), MD5(n.public_text), COALESCE(n.public_grid_m, ''),
			COALESCE(n.recipe_version_id, ''), COALESCE(n.zone_set_id, ''), COALESCE(n.working_epsg, ''), COALESCE(n.crs_epsg, ''),
			COALESCE(MD5(n.study_area), ''), COALESCE(MD5(n.exclusions), ''),
			(SELECT CONCAT(p.id, ':', p.revision_id) FROM plans p WHERE p.network_id = n.id AND p.state = 'current'),
			(SELECT CONCAT(COUNT(*), ':', COALESCE(MAX(t.updated_at), ''), ':', COALESCE(SUM(CRC32(CONCAT_WS(',', t.id, t.installed_lon, t.installed_lat))), 0)) FROM field_tasks t WHERE t.network_id = n.id AND t.state = 'done'),
			(SELECT CONCAT(COUNT(*), ':', COALESCE(MAX(s.updated_at), ''), ':', COALESCE(SUM(CRC32(CONCAT_WS(',', s.id, s.status, s.lon, s.lat, s.sensor_type_id))), 0)) FROM sensors s WHERE s.network_id = n.id),
			(SELECT CONCAT(COUNT(*), ':', COALESCE(SUM(CRC32(CONCAT_WS(',', st.id, st.name, st.radius_m, st.footprint))), 0)) FROM sensor_types st WHERE st.network_id = n.id),
			(SELECT CONCAT(COUNT(*), ':', COALESCE(SUM(CRC32(CONCAT_WS(',', z.id, z.code, z.name, z.importance_share))), 0)) FROM zones z WHERE z.zone_set_id = n.zone_set_id)
		) AS fingerprint, n.recipe_version_id IS NOT NULL AS has_recipe
		FROM networks n WHERE n.published_slug = ?`,
		[slug]
	);
	const row = (rows as { fingerprint: string; has_recipe: number }[])[0];
	return row ? { fingerprint: row.fingerprint, hasRecipe: Boolean(row.has_recipe) } : null;
}

/** Public maps built in this process, by slug, with the fingerprint they were built from. */
const built = new Map<string, { fingerprint: string; map: PublicMap }>();
const BUILT_MAX = 64;

/**
 * The public map, built once per change of what it is made of: each request costs one small query
 * (`publicMapFingerprint`); a plan approved, a task done, a publish setting or the network changed
 * (in any process) gives another fingerprint and the map is built again. A map built while its
 * importance image is still being drawn (its job) is not kept, so the overlay appears once it is ready.
 */
export async function cachedPublicMap(db: Db, slug: string, importance: ImportanceSource, cache: ObjectStore): Promise<PublicMap> {
	const f = await publicMapFingerprint(db, slug);
	if (!f) {
		built.delete(slug);
		throw new ServiceError(404, 'not_found', 'No such public map.');
	}
	const hit = built.get(slug);
	if (hit && hit.fingerprint === f.fingerprint) return hit.map;
	const map = await publicMap(db, slug, importance, cache);
	if (map.importance || !f.hasRecipe) {
		built.delete(slug);
		if (built.size >= BUILT_MAX) built.delete(built.keys().next().value!);
		built.set(slug, { fingerprint: f.fingerprint, map });
	}
	return map;
}

/**
 * What the public map needs to become a web map over the deployment's basemap (asked for only when
 * one is set): the working CRS's proj4 definition and the importance overlay in EPSG:3857.
 */
export async function publicWebMap(db: Db, slug: string, importance: ImportanceSource, cache: ObjectStore): Promise<WebMapExtras | null> {
	const network = await findPublishedNetwork(db, slug);
	const apiBase = `/api/v1/public/networks/${network.slug}`;
	const doc = await networkMap(db, { network, importance, cache, apiBase, mayViewLayers: false, imageEpsg: WEB_MAP_EPSG });
	if (!doc.crs) return null;
	const b = doc.backdrop?.kind === 'importance' ? doc.backdrop : null;
	return { proj4: doc.crs.proj4, overlay: b ? { url: `${apiBase}/importance.png?epsg=${WEB_MAP_EPSG}`, epsg: b.epsg, bounds: b.bounds } : null };
}

/** The importance overlay PNG of a published network, in its working CRS or `epsg` (3857) (404 when unpublished or without importance). */
export async function publicImportancePng(db: Db, slug: string, importance: ImportanceSource, cache: ObjectStore, epsg?: number): Promise<Buffer> {
	const network = await findPublishedNetwork(db, slug);
	const png = await importancePng(db, network, importance, cache, epsg);
	if (!png) throw new ServiceError(404, 'not_found', 'This map has no importance overlay.');
	return png;
}
