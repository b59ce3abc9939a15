/**
 * Study areas, exclusions and zones uploaded as GeoJSON (Feature, FeatureCollection, Polygon,
 * MultiPolygon) or KML, turned into validated MultiPolygon features in WGS 84.
 *
 * Every ring must be closed (first position = last), hold at least four positions and three
 * distinct points, enclose some area and stay within lon −180…180, lat −90…90; a hole must start
 * inside its exterior ring, and no ring may cross itself or another (a bow-tie is refused, naming
 * where it crosses). Winding is normalised to RFC 7946
 * §3.1.6: exterior rings counter-clockwise, holes clockwise. Heights are dropped.
 * Problems come back as a PolygonError whose message names the feature and ring.
 */
import { kml } from '@tmcw/togeojson';
import { DOMParser } from '@xmldom/xmldom';
import { orientRing, pointInPolygons, ringArea2, selfIntersection, type Position, type Ring } from './geometry';

export type { Position, Ring };

export interface MultiPolygonGeometry {
	type: 'MultiPolygon';
	coordinates: Ring[][];
}

export interface PolygonFeature {
	id?: string;
	name?: string;
	geometry: MultiPolygonGeometry;
}

export class PolygonError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'PolygonError';
	}
}

export interface ParsePolygonOptions {
	/** Default: KML when the text starts with '<', GeoJSON otherwise. */
	format?: 'geojson' | 'kml';
	/** Most features accepted; default 1000. */
	maxFeatures?: number;
	/** Most positions over all rings; default 200 000. */
	maxPositions?: number;
}

type Json = Record<string, unknown>;

function isObject(v: unknown): v is Json {
	return typeof v === 'object' && v !== null && !Array.isArray(v);
}

/**
 * A stored polygon value (study area, exclusion, zone, layer outline) as one MultiPolygon, without
 * validating it again: the services store MultiPolygons; older rows and the demo seed may hold a
 * Polygon, a Feature or a FeatureCollection. Null when it holds no polygon.
 */
export function asMultiPolygon(v: unknown): MultiPolygonGeometry | null {
	if (!v || typeof v !== 'object') return null;
	const g = v as { type?: unknown; coordinates?: unknown; geometry?: unknown; features?: unknown };
	if (g.type === 'Feature') return asMultiPolygon(g.geometry);
	if (g.type === 'FeatureCollection' && Array.isArray(g.features)) {
		const parts = g.features.flatMap((f) => asMultiPolygon(f)?.coordinates ?? []);
		return parts.length ? { type: 'MultiPolygon', coordinates: parts } : null;
	}
	if (!Array.isArray(g.coordinates) || g.coordinates.length === 0) return null;
	if (g.type === 'MultiPolygon') return v as MultiPolygonGeometry;
	if (g.type === 'Polygon') return { type: 'MultiPolygon', coordinates: [g.coordinates as MultiPolygonGeometry['coordinates'][number]] };
	return null;
}

interface Counter {
	positions: number;
	max: number;
}

function parseRing(raw: unknown, where: string, counter: Counter): Ring {
	if (!Array.isArray(raw)) throw new PolygonError(`${where}: a ring must be a list of positions`);
	const ring: Ring = raw.map((p, k) => {
		if (!Array.isArray(p) || p.length < 2 || p.length > 3 || !p.every((v) => typeof v === 'number' && Number.isFinite(v))) {
			throw new PolygonError(`${where}: position ${k + 1} is not [lon, lat] numbers`);
		}
		const [lon, lat] = p as number[];
		if (lon < -180 || lon > 180 || lat < -90 || lat > 90) {
			throw new PolygonError(`${where}: position ${k + 1} (${lon}, ${lat}) is outside lon −180…180 / lat −90…90; the file must be in WGS 84 lon/lat`);
		}
		return [lon, lat];
	});
	counter.positions += ring.length;
	if (counter.positions > counter.max) throw new PolygonError(`the file has more than ${counter.max} positions; simplify the polygons`);
	if (ring.length < 4) throw new PolygonError(`${where}: a ring needs at least 4 positions (it has ${ring.length})`);
	const first = ring[0];
	const last = ring[ring.length - 1];
	if (first[0] !== last[0] || first[1] !== last[1]) throw new PolygonError(`${where}: the ring is not closed (its first and last positions differ)`);
	const distinct = new Set(ring.map(([x, y]) => `${x},${y}`));
	if (distinct.size < 3) throw new PolygonError(`${where}: the ring has fewer than 3 distinct points`);
	if (ringArea2(ring) === 0) throw new PolygonError(`${where}: the ring encloses no area`);
	return ring;
}

/** Validate one polygon's rings and orient them: exterior CCW, holes CW. */
function parsePolygon(raw: unknown, where: string, counter: Counter): Ring[] {
	if (!Array.isArray(raw) || raw.length === 0) throw new PolygonError(`${where}: a polygon needs at least an exterior ring`);
	const rings = raw.map((r, k) => parseRing(r, `${where}, ${k === 0 ? 'exterior ring' : `hole ${k}`}`, counter));
	const out = rings.map((ring, k) => orientRing(ring, k === 0));
	for (let k = 1; k < out.length; k++) {
		const p = out[k].find((q) => !out[0].some((e) => e[0] === q[0] && e[1] === q[1]));
		if (p && !pointInPolygons(p, [[out[0]]])) throw new PolygonError(`${where}, hole ${k}: the hole lies outside the exterior ring`);
	}
	const crossing = selfIntersection(out);
	if (crossing) {
		const at = `${crossing[0].toFixed(6)}, ${crossing[1].toFixed(6)}`;
		throw new PolygonError(`${where}: the outline crosses itself near lon/lat ${at} (a bow-tie or a figure of eight); redraw it so that no edge crosses another`);
	}
	return out;
}

function geometryToPolygons(g: unknown, where: string, counter: Counter): Ring[][] {
	if (!isObject(g)) throw new PolygonError(`${where}: has no geometry`);
	if (g.type === 'Polygon') return [parsePolygon(g.coordinates, where, counter)];
	if (g.type === 'MultiPolygon') {
		if (!Array.isArray(g.coordinates) || g.coordinates.length === 0) throw new PolygonError(`${where}: the MultiPolygon has no polygons`);
		return g.coordinates.map((p, k) => parsePolygon(p, `${where}, polygon ${k + 1}`, counter));
	}
	if (g.type === 'GeometryCollection' && Array.isArray(g.geometries)) {
		// KML MultiGeometry arrives as a GeometryCollection: accept it when it holds only polygons.
		if (g.geometries.length === 0) throw new PolygonError(`${where}: the geometry collection is empty`);
		return g.geometries.flatMap((sub, k) => geometryToPolygons(sub, `${where}, part ${k + 1}`, counter));
	}
	throw new PolygonError(`${where}: is a ${typeof g.type === 'string' ? g.type : 'geometry of unknown type'}; only Polygon and MultiPolygon areas are accepted`);
}

function label(f: Json, k: number): string {
	const props = isObject(f.properties) ? f.properties : {};
	const name = typeof props.name === 'string' && props.name.trim() ? ` "${props.name.trim().slice(0, 60)}"` : '';
	return `feature ${k + 1}${name}`;
}

function textOf(v: unknown): string | undefined {
	if (typeof v === 'string' && v.trim() !== '') return v.trim().slice(0, 200);
	if (typeof v === 'number' && Number.isFinite(v)) return String(v);
	return undefined;
}

const CRS84_NAMES = /^(urn:ogc:def:crs:OGC:(1\.3|):?CRS84|urn:ogc:def:crs:EPSG::4326|EPSG:4326)$/i;

/** Parse GeoJSON text or an already-parsed object. */
export function parseGeoJsonPolygons(input: string | unknown, opts: ParsePolygonOptions = {}): PolygonFeature[] {
	let doc: unknown = input;
	if (typeof input === 'string') {
		try {
			doc = JSON.parse(input.charCodeAt(0) === 0xfeff ? input.slice(1) : input);
		} catch {
			throw new PolygonError('the file is not valid JSON');
		}
	}
	if (!isObject(doc)) throw new PolygonError('expected a GeoJSON object (Feature, FeatureCollection, Polygon or MultiPolygon)');
	if (doc.crs !== undefined) {
		const name = isObject(doc.crs) && isObject(doc.crs.properties) ? doc.crs.properties.name : undefined;
		if (typeof name !== 'string' || !CRS84_NAMES.test(name)) {
			throw new PolygonError('the GeoJSON declares a CRS other than WGS 84; GeoJSON must be WGS 84 lon/lat (RFC 7946): export it as WGS 84');
		}
	}
	const counter: Counter = { positions: 0, max: opts.maxPositions ?? 200_000 };
	let features: unknown[];
	if (doc.type === 'FeatureCollection') {
		if (!Array.isArray(doc.features)) throw new PolygonError('the FeatureCollection has no "features" list');
		features = doc.features;
	} else if (doc.type === 'Feature') {
		features = [doc];
	} else if (doc.type === 'Polygon' || doc.type === 'MultiPolygon') {
		return [{ geometry: { type: 'MultiPolygon', coordinates: geometryToPolygons(doc, 'the geometry', counter) } }];
	} else {
		throw new PolygonError(`expected a Feature, FeatureCollection, Polygon or MultiPolygon, not ${JSON.stringify(doc.type ?? null)}`);
	}
	if (features.length === 0) throw new PolygonError('the file holds no features');
	const maxFeatures = opts.maxFeatures ?? 1000;
	if (features.length > maxFeatures) throw new PolygonError(`the file holds ${features.length} features; at most ${maxFeatures} are accepted`);
	return features.map((f, k) => {
		if (!isObject(f) || f.type !== 'Feature') throw new PolygonError(`feature ${k + 1}: not a GeoJSON Feature`);
		const where = label(f, k);
		const props = isObject(f.properties) ? f.properties : {};
		const out: PolygonFeature = { geometry: { type: 'MultiPolygon', coordinates: geometryToPolygons(f.geometry, where, counter) } };
		const id = textOf(f.id) ?? textOf(props.id);
		const name = textOf(props.name);
		if (id !== undefined) out.id = id;
		if (name !== undefined) out.name = name;
		return out;
	});
}

/** Parse KML text (placemarks with Polygon or MultiGeometry of polygons). */
export function parseKmlPolygons(text: string, opts: ParsePolygonOptions = {}): PolygonFeature[] {
	let doc: ReturnType<DOMParser['parseFromString']>;
	const problems: string[] = [];
	try {
		doc = new DOMParser({
			onError: (level, msg) => {
				if (level !== 'warning') problems.push(msg);
			}
		}).parseFromString(text, 'text/xml');
	} catch (e) {
		throw new PolygonError(`the KML is not well-formed XML (${e instanceof Error ? e.message.split('\n')[0] : String(e)})`);
	}
	if (problems.length) throw new PolygonError(`the KML is not well-formed XML (${problems[0].split('\n')[0]})`);
	const root = doc.documentElement;
	if (!root || root.localName !== 'kml') throw new PolygonError('not a KML file (the root element is not <kml>)');
	const fc = kml(doc);
	const features = fc.features;
	if (features.length === 0) throw new PolygonError('the KML holds no placemarks');
	return parseGeoJsonPolygons({ type: 'FeatureCollection', features }, opts);
}

/** Parse an upload, choosing the format from `opts.format` or the first character. */
export function parsePolygonUpload(text: string, opts: ParsePolygonOptions = {}): PolygonFeature[] {
	const body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
	if (body.trim() === '') throw new PolygonError('the file is empty');
	const format = opts.format ?? (body.trimStart().startsWith('<') ? 'kml' : 'geojson');
	return format === 'kml' ? parseKmlPolygons(body, opts) : parseGeoJsonPolygons(body, opts);
}
