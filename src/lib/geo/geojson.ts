/**
 * Reading the GeoJSON (RFC 7946) inputs of a network: polygons (study area, exclusions, zones) and
 * sensor points, all WGS 84 lon/lat. Malformed input is a GeoJsonError naming the file and the place.
 */
import type { Ring } from '../engine/rasterize';
import { MOBILITIES, type Mobility } from '../engine/types';

export class GeoJsonError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'GeoJsonError';
	}
}

type Json = unknown;

function isObject(v: Json): v is Record<string, unknown> {
	return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function isPosition(p: Json): p is [number, number] {
	return (
		Array.isArray(p) &&
		p.length >= 2 &&
		typeof p[0] === 'number' &&
		typeof p[1] === 'number' &&
		Number.isFinite(p[0]) &&
		Number.isFinite(p[1]) &&
		p[0] >= -180 &&
		p[0] <= 360 &&
		p[1] >= -90 &&
		p[1] <= 90
	);
}

function readRing(r: Json, where: string): Ring {
	if (!Array.isArray(r) || r.length < 4) throw new GeoJsonError(`${where}: a linear ring needs at least 4 positions`);
	const out: Array<[number, number]> = [];
	for (const p of r) {
		if (!isPosition(p)) throw new GeoJsonError(`${where}: ${JSON.stringify(p)} is not a [lon, lat] position`);
		out.push([p[0], p[1]]);
	}
	const a = out[0];
	const b = out[out.length - 1];
	if (a[0] !== b[0] || a[1] !== b[1]) throw new GeoJsonError(`${where}: the ring is not closed`);
	out.pop();
	return out;
}

/** All rings (exteriors and holes) of a Polygon or MultiPolygon geometry, lon/lat, not closed. */
export function polygonRings(geometry: Json, where: string): Ring[] {
	if (!isObject(geometry)) throw new GeoJsonError(`${where}: missing geometry`);
	if (geometry.type === 'Polygon') {
		if (!Array.isArray(geometry.coordinates) || geometry.coordinates.length === 0) {
			throw new GeoJsonError(`${where}: Polygon without rings`);
		}
		return geometry.coordinates.map((r, i) => readRing(r, `${where} ring ${i + 1}`));
	}
	if (geometry.type === 'MultiPolygon') {
		if (!Array.isArray(geometry.coordinates) || geometry.coordinates.length === 0) {
			throw new GeoJsonError(`${where}: MultiPolygon without polygons`);
		}
		return geometry.coordinates.flatMap((poly, k) => {
			if (!Array.isArray(poly) || poly.length === 0) throw new GeoJsonError(`${where}: polygon ${k + 1} without rings`);
			return poly.map((r, i) => readRing(r, `${where} polygon ${k + 1} ring ${i + 1}`));
		});
	}
	throw new GeoJsonError(`${where}: geometry type ${JSON.stringify(geometry.type)} is not Polygon or MultiPolygon`);
}

function features(doc: Json, file: string): Record<string, unknown>[] {
	if (!isObject(doc)) throw new GeoJsonError(`${file}: not a GeoJSON object`);
	if (doc.type === 'FeatureCollection') {
		if (!Array.isArray(doc.features)) throw new GeoJsonError(`${file}: FeatureCollection without a features array`);
		return doc.features.map((f, i) => {
			if (!isObject(f) || f.type !== 'Feature') throw new GeoJsonError(`${file}: feature ${i + 1} is not a Feature`);
			return f;
		});
	}
	if (doc.type === 'Feature') return [doc];
	if (doc.type === 'Polygon' || doc.type === 'MultiPolygon') return [{ type: 'Feature', geometry: doc, properties: {} }];
	throw new GeoJsonError(`${file}: expected a FeatureCollection, Feature or (Multi)Polygon, found ${JSON.stringify(doc.type)}`);
}

/** All polygon rings of a document (FeatureCollection, Feature or bare geometry). */
export function readPolygons(doc: Json, file: string): Ring[][] {
	const fs = features(doc, file);
	if (fs.length === 0) throw new GeoJsonError(`${file}: no polygons`);
	return fs.map((f, i) => polygonRings(f.geometry, `${file} feature ${i + 1}`));
}

export interface ZoneFeature {
	id: string;
	/** lon/lat rings */
	rings: Ring[];
}

/** Zone polygons with a unique string or number property `id`. */
export function readZones(doc: Json, file: string): ZoneFeature[] {
	const fs = features(doc, file);
	if (fs.length === 0) throw new GeoJsonError(`${file}: no zones`);
	const seen = new Set<string>();
	return fs.map((f, i) => {
		const props = isObject(f.properties) ? f.properties : {};
		const raw = props.id ?? f.id;
		if (typeof raw !== 'string' && typeof raw !== 'number') throw new GeoJsonError(`${file} feature ${i + 1}: zone without an id property`);
		const id = String(raw);
		if (seen.has(id)) throw new GeoJsonError(`${file}: zone id "${id}" appears twice`);
		seen.add(id);
		return { id, rings: polygonRings(f.geometry, `${file} zone "${id}"`) };
	});
}

export interface SensorFeature {
	id: string;
	lon: number;
	lat: number;
	radius?: number;
	mobility: Mobility;
}

/** Sensor points with properties id (string), optional radius_m (> 0) and mobility. */
export function readSensors(doc: Json, file: string): SensorFeature[] {
	const fs = features(doc, file);
	const seen = new Set<string>();
	return fs.map((f, i) => {
		const where = `${file} feature ${i + 1}`;
		const props = isObject(f.properties) ? f.properties : {};
		const g = f.geometry;
		if (!isObject(g) || g.type !== 'Point' || !isPosition(g.coordinates)) {
			throw new GeoJsonError(`${where}: a sensor must be a Point with [lon, lat] coordinates`);
		}
		const id = props.id;
		if (typeof id !== 'string' || id === '') throw new GeoJsonError(`${where}: sensor without a string id property`);
		if (seen.has(id)) throw new GeoJsonError(`${file}: sensor id "${id}" appears twice`);
		seen.add(id);
		let radius: number | undefined;
		if (props.radius_m !== undefined && props.radius_m !== null) {
			if (typeof props.radius_m !== 'number' || !(props.radius_m > 0) || !Number.isFinite(props.radius_m)) {
				throw new GeoJsonError(`${where}: radius_m must be a positive number of metres`);
			}
			radius = props.radius_m;
		}
		let mobility: Mobility = 'relocatable';
		if (props.mobility !== undefined && props.mobility !== null) {
			if (!MOBILITIES.includes(props.mobility as Mobility)) {
				throw new GeoJsonError(`${where}: mobility must be one of ${MOBILITIES.join(', ')}`);
			}
			mobility = props.mobility as Mobility;
		}
		const [lon, lat] = g.coordinates as [number, number];
		return { id, lon, lat, radius, mobility };
	});
}

/**
 * Project lon/lat rings into the working CRS, adding vertices on long edges so that the projected
 * edge follows the straight lon/lat edge to within a small part of maxSegment metres.
 */
export function projectRings(
	rings: readonly Ring[],
	forward: (lon: number, lat: number) => [number, number],
	maxSegment: number
): Ring[] {
	return rings.map((ring) => {
		const out: Array<[number, number]> = [];
		const n = ring.length;
		for (let i = 0; i < n; i++) {
			const a = ring[i];
			const b = ring[(i + 1) % n];
			const pa = forward(a[0], a[1]);
			const pb = forward(b[0], b[1]);
			out.push(pa);
			const len = Math.hypot(pb[0] - pa[0], pb[1] - pa[1]);
			const pieces = Math.min(256, Math.ceil(len / maxSegment));
			for (let k = 1; k < pieces; k++) {
				const t = k / pieces;
				out.push(forward(a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1])));
			}
		}
		return out;
	});
}
