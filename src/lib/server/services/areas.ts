/**
 * Study area and exclusions of a network. Uploads (GeoJSON or KML) and API bodies are validated by
 * src/lib/geo/polygons.ts and stored in WGS 84:
 *  - networks.study_area: one GeoJSON MultiPolygon geometry (the parts of every uploaded feature);
 *  - networks.exclusions: a GeoJSON FeatureCollection of MultiPolygon features, each with
 *    properties {name} (e.g. "reservoir", "road", "no access permission").
 * Each change checks the network's version (optimistic) and is audited in the same transaction.
 */
import type { Knex } from 'knex';
import { z } from 'zod';
import { recordAudit } from '../repositories/audit';
import { findNetwork, updateNetwork, type NetworkRow } from '../repositories/networks';
import { asMultiPolygon, parseGeoJsonPolygons, parsePolygonUpload, PolygonError, type MultiPolygonGeometry, type PolygonFeature } from '../../geo/polygons';
import { ServiceError } from './errors';
import { settleWorkingCrs } from './working-crs';

export interface ExclusionFeature {
	type: 'Feature';
	properties: { name: string };
	geometry: MultiPolygonGeometry;
}
export interface ExclusionCollection {
	type: 'FeatureCollection';
	features: ExclusionFeature[];
}

export const areaPatch = z
	.object({
		version: z.number({ error: 'version is required' }).int().positive('version is required'),
		studyArea: z.unknown().optional(),
		exclusions: z.array(z.unknown()).max(1000, 'At most 1000 exclusions.').optional()
	})
	.strict()
	.refine((v) => v.studyArea !== undefined || v.exclusions !== undefined, { message: 'Send studyArea, exclusions or both.', path: ['_'] });
export type AreaPatch = z.infer<typeof areaPatch>;

/** All parts of all features as one MultiPolygon. */
function mergeFeatures(features: readonly PolygonFeature[]): MultiPolygonGeometry {
	return { type: 'MultiPolygon', coordinates: features.flatMap((f) => f.geometry.coordinates) };
}

function toExclusions(features: readonly PolygonFeature[]): ExclusionCollection {
	return {
		type: 'FeatureCollection',
		features: features.map((f, i) => ({ type: 'Feature', properties: { name: f.name ?? f.id ?? `Exclusion ${i + 1}` }, geometry: f.geometry }))
	};
}

/**
 * The exclusions stored on a network as a list of named features (tolerates a bare list, a
 * FeatureCollection, or a bare Polygon/MultiPolygon geometry).
 */
export function exclusionList(v: unknown): ExclusionFeature[] {
	if (!v || typeof v !== 'object') return [];
	const list: unknown[] = Array.isArray(v) ? v : Array.isArray((v as { features?: unknown }).features) ? (v as ExclusionCollection).features : [{ type: 'Feature', properties: {}, geometry: v }];
	const out: ExclusionFeature[] = [];
	list.forEach((f, i) => {
		const geometry = asMultiPolygon((f as { geometry?: unknown } | null)?.geometry);
		if (!geometry) return;
		const name = (f as { properties?: { name?: unknown } }).properties?.name;
		out.push({ type: 'Feature', properties: { name: typeof name === 'string' && name ? name : `Exclusion ${i + 1}` }, geometry });
	});
	return out;
}

function parseOrFail(field: string, fn: () => PolygonFeature[]): PolygonFeature[] {
	try {
		return fn();
	} catch (e) {
		if (e instanceof PolygonError) throw new ServiceError(400, 'invalid_geometry', e.message, field);
		throw e;
	}
}

/** Validate an API body's geometries into what is stored. */
export function normaliseAreaPatch(p: AreaPatch): { study_area?: MultiPolygonGeometry; exclusions?: ExclusionCollection } {
	const out: { study_area?: MultiPolygonGeometry; exclusions?: ExclusionCollection } = {};
	if (p.studyArea !== undefined) out.study_area = mergeFeatures(parseOrFail('studyArea', () => parseGeoJsonPolygons(p.studyArea)));
	if (p.exclusions !== undefined) {
		out.exclusions =
			p.exclusions.length === 0
				? { type: 'FeatureCollection', features: [] }
				: toExclusions(parseOrFail('exclusions', () => parseGeoJsonPolygons({ type: 'FeatureCollection', features: p.exclusions })));
	}
	return out;
}

/** Parse an uploaded file (GeoJSON or KML) for the study area or the exclusions. */
export function parseAreaUpload(kind: 'studyArea' | 'exclusions', text: string, fileName = ''): { study_area?: MultiPolygonGeometry; exclusions?: ExclusionCollection } {
	const format = /\.kml$/i.test(fileName) ? 'kml' : /\.(geo)?json$/i.test(fileName) ? 'geojson' : undefined;
	const features = parseOrFail(kind, () => parsePolygonUpload(text, { format }));
	return kind === 'studyArea' ? { study_area: mergeFeatures(features) } : { exclusions: toExclusions(features) };
}

const STALE = 'Someone else changed this network meanwhile. Reload and try again.';

/** Store a new study area and/or exclusions, checking the version the caller read. */
export async function setArea(
	db: Knex,
	networkId: number,
	actorId: number,
	version: number,
	change: { study_area?: MultiPolygonGeometry | null; exclusions?: ExclusionCollection | null }
): Promise<NetworkRow> {
	return db.transaction(async (trx) => {
		const before = await findNetwork(trx, networkId, { forUpdate: true });
		if (!before) throw new ServiceError(404, 'not_found', 'No such network.');
		if (before.version !== version || !(await updateNetwork(trx, networkId, version, change))) throw new ServiceError(409, 'stale', STALE);
		const summary = (n: { study_area?: unknown; exclusions?: unknown }) => ({
			...('study_area' in change ? { study_area: n.study_area ?? null } : {}),
			...('exclusions' in change ? { exclusions: n.exclusions ?? null } : {})
		});
		if ('study_area' in change) await settleWorkingCrs(trx, networkId);
		await recordAudit(trx, { organisationId: before.organisation_id, actorUserId: actorId, action: 'network.area', objectType: 'network', objectId: networkId, before: summary(before), after: summary(change) });
		return (await findNetwork(trx, networkId))!;
	});
}

export function areaView(n: NetworkRow) {
	return { version: n.version, studyArea: asMultiPolygon(n.study_area), exclusions: exclusionList(n.exclusions) };
}
