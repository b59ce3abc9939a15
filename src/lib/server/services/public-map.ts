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
import { networkMap, importancePng, type ImportanceSource } from './map-data';
import { WEB_MAP_EPSG } from '../../map/web-map';
import type { RevisionMetrics, RevisionOutputs } from './placement';
import { ServiceError } from './errors';

export interface PublicSite {
	lon: number;
	lat: number;
	/** Working-CRS metres (the map's drawing coordinates). */
	x: number;
	y: number;
	radiusM: number;
	type: string;
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
	sensorTypes: { name: string; radiusM: number; count: number }[];
	coverage: { sensorCount: number; coverage: number | null; p95DistanceM: number | null; zones: { name: string; importanceShare: number | null; sensors: number }[] };
	importance: { url: string; bounds: MapBounds; min: number; max: number; legend: MapLegendStop[] } | null;
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
}

/** The current plan's sites, where a done task stands as installed; without a plan, the active inventory. */
async function candidateSites(db: Db, networkId: number): Promise<{ sites: Candidate[]; plan: { approvedAt: string; metrics: RevisionMetrics } | null }> {
	const plan = await db('plans as p').join('revisions as r', 'r.id', 'p.revision_id').select('p.id', 'p.approved_at', 'r.outputs', 'r.metrics').where({ 'p.network_id': networkId, 'p.state': 'current' }).first();
	const types = new Map<number, { name: string; radius: number }>((await db('sensor_types').select('id', 'name', 'radius_m').where({ network_id: networkId })).map((t: { id: number; name: string; radius_m: number }) => [t.id, { name: t.name, radius: Number(t.radius_m) }]));
	if (!plan) {
		const rows = await db('sensors').select('lon', 'lat', 'sensor_type_id').where({ network_id: networkId, status: 'active' });
		return { plan: null, sites: rows.map((s: { lon: number; lat: number; sensor_type_id: number }) => ({ lon: Number(s.lon), lat: Number(s.lat), radiusM: types.get(s.sensor_type_id)?.radius ?? 0, type: types.get(s.sensor_type_id)?.name ?? '' })) };
	}
	const parse = (v: unknown) => (typeof v === 'string' ? JSON.parse(v) : v);
	const outputs = parse(plan.outputs) as RevisionOutputs;
	const done = new Map<string, { lon: number; lat: number }>(
		(await db('field_tasks').select('site', 'installed_lon', 'installed_lat').where({ plan_id: plan.id, state: 'done' }).whereNotNull('site').whereNotNull('installed_lon')).map((t: { site: string; installed_lon: number; installed_lat: number }) => [t.site, { lon: Number(t.installed_lon), lat: Number(t.installed_lat) }])
	);
	const sites = outputs.targets.features.map((f) => {
		const at = done.get(String(f.properties.site));
		const typeId = typeof f.properties.typeId === 'number' ? f.properties.typeId : null;
		return { lon: at?.lon ?? f.geometry.coordinates[0], lat: at?.lat ?? f.geometry.coordinates[1], radiusM: Number(f.properties.radiusM ?? 0), type: (typeId !== null ? types.get(typeId)?.name : undefined) ?? String(f.properties.type ?? '') };
	});
	return { sites, plan: { approvedAt: new Date(plan.approved_at).toISOString(), metrics: parse(plan.metrics) as RevisionMetrics } };
}

export async function publicMap(db: Db, slug: string, importance: ImportanceSource): Promise<PublicMap> {
	const network = await findPublishedNetwork(db, slug);
	const apiBase = `/api/v1/public/networks/${network.slug}`;
	const doc = await networkMap(db, { network, importance, apiBase, mayViewLayers: false });
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
			return { lon, lat, x, y, radiusM: c.radiusM, type: c.type };
		});
		// Stable order that says nothing about codes or tasks.
		sites.sort((a, b) => a.x - b.x || a.y - b.y);
	}
	const counts = new Map<string, { name: string; radiusM: number; count: number }>();
	for (const s of sites) {
		const k = `${s.type}|${s.radiusM}`;
		counts.set(k, { name: s.type, radiusM: s.radiusM, count: (counts.get(k)?.count ?? 0) + 1 });
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
		importance: b ? { url: `${apiBase}/importance.png`, bounds: b.bounds, min: b.min, max: b.max, legend: b.legend } : null
	};
}

/**
 * What the public map needs to become a web map over the deployment's basemap (asked for only when
 * one is set): the working CRS's proj4 definition and the importance overlay in EPSG:3857.
 */
export async function publicWebMap(db: Db, slug: string, importance: ImportanceSource): Promise<WebMapExtras | null> {
	const network = await findPublishedNetwork(db, slug);
	const apiBase = `/api/v1/public/networks/${network.slug}`;
	const doc = await networkMap(db, { network, importance, apiBase, mayViewLayers: false, imageEpsg: WEB_MAP_EPSG });
	if (!doc.crs) return null;
	const b = doc.backdrop?.kind === 'importance' ? doc.backdrop : null;
	return { proj4: doc.crs.proj4, overlay: b ? { url: `${apiBase}/importance.png?epsg=${WEB_MAP_EPSG}`, epsg: b.epsg, bounds: b.bounds } : null };
}

/** The importance overlay PNG of a published network, in its working CRS or `epsg` (3857) (404 when unpublished or without importance). */
export async function publicImportancePng(db: Db, slug: string, importance: ImportanceSource, epsg?: number): Promise<Buffer> {
	const network = await findPublishedNetwork(db, slug);
	const png = await importancePng(db, network, importance, undefined, epsg);
	if (!png) throw new ServiceError(404, 'not_found', 'This map has no importance overlay.');
	return png;
}
