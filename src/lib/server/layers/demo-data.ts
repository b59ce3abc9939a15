/**
 * Demo data for Cairnfield: the invented "Vennarrow Vale" catchment. The names are invented; the
 * numbers sit on unremarkable open grazing country of sandy red plains in the far west of New South
 * Wales (about 32.15° S, 143.55° E, UTM zone 54S), tens of kilometres from the nearest town, and
 * every feature is placed relative to one centre, so the scenario can be moved by changing it.
 * Everything here is generated from smooth deterministic functions (seeded value noise), so the
 * files in data/demo/ can be rebuilt byte for byte:
 *
 *   npx tsx src/lib/server/layers/demo-data.ts [outDir]      (default data/demo)
 *
 * Files: soil-moisture.tif (1 km, 40×30, EPSG:32754), vegetation-index.tif (30 m, 200×150,
 * EPSG:32754), terrain-height.tif (100 m, 290×250, EPSG:32754, UInt16 metres), study-area.geojson,
 * exclusions.geojson, zones.geojson and sensors.csv.
 */
import { writeArrayBuffer } from 'geotiff';
import { mkdir, writeFile } from 'node:fs/promises';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { transformer } from '../../geo/crs';
import { exportSensorsCsv, type SensorRecord } from '../inventory';
import { mulberry32 } from '../../engine/prng';

export const DEMO_EPSG = 32754; // WGS 84 / UTM zone 54S
export const DEMO_NODATA = -9999;
/** Sensor type names the demo sensors use; seed these types before importing sensors.csv. */
export const DEMO_SENSOR_TYPES = ['soil moisture probe', 'cosmic-ray neutron sensor'] as const;

/**
 * Plausible bounds for volumetric soil moisture on sand: from the lowest wilting point to the
 * highest field capacity for sand in FAO Irrigation and Drainage Paper 56 (Allen et al. 1998),
 * Table 19: field capacity 0.07–0.17, wilting point 0.02–0.07 m³/m³.
 */
export const SAND_MOISTURE_BOUNDS = { min: 0.02, max: 0.17 } as const;

export interface DemoGrid {
	x0: number;
	y0: number;
	cell: number;
	width: number;
	height: number;
}

/** Centre of the catchment in EPSG:32754 metres (about 32.15° S, 143.55° E); everything else is placed from it. */
export const DEMO_CENTRE: readonly [number, number] = [740_000, 6_440_000];
const [CX, CY] = DEMO_CENTRE;

export const MOISTURE_GRID: DemoGrid = { x0: CX - 20_000, y0: CY + 15_000, cell: 1000, width: 40, height: 30 };
export const VEGETATION_GRID: DemoGrid = { x0: CX - 5000, y0: CY + 3000, cell: 30, width: 200, height: 150 };
/** The terrain model covers the whole catchment (its outline reaches −12.7..+15.2 km east, −12.4..+11.8 km north of the centre). */
export const TERRAIN_GRID: DemoGrid = { x0: CX - 13_000, y0: CY + 12_000, cell: 100, width: 290, height: 250 };

const CENTRE: [number, number] = [CX, CY];
const RESERVOIR = { x: CX + 6500, y: CY - 4000, a: 1600, b: 750, angle: 0.45 };

/** Smooth 2-D value noise in about −1..1: a lattice of seeded values, smoothstep-interpolated, octaves summed. */
export function valueNoise(seed: number, octaves = 4): (x: number, y: number) => number {
	const size = 64;
	const lattices = Array.from({ length: octaves }, (_, o) => {
		const rand = mulberry32(seed * 1013 + o * 7919);
		return Float64Array.from({ length: size * size }, () => rand() * 2 - 1);
	});
	const smooth = (t: number) => t * t * (3 - 2 * t);
	return (x, y) => {
		let total = 0;
		let norm = 0;
		for (let o = 0; o < octaves; o++) {
			const f = 2 ** o;
			const amp = 0.5 ** o;
			const lx = x * f;
			const ly = y * f;
			const ix = Math.floor(lx);
			const iy = Math.floor(ly);
			const tx = smooth(lx - ix);
			const ty = smooth(ly - iy);
			const L = lattices[o];
			const at = (i: number, j: number) => L[(((j % size) + size) % size) * size + (((i % size) + size) % size)];
			const top = at(ix, iy) + (at(ix + 1, iy) - at(ix, iy)) * tx;
			const bottom = at(ix, iy + 1) + (at(ix + 1, iy + 1) - at(ix, iy + 1)) * tx;
			total += amp * (top + (bottom - top) * ty);
			norm += amp;
		}
		return total / norm;
	};
}

/** Distance in metres from (x, y) to the main beck, a gentle curve running west to east. */
function distanceToBeck(x: number, y: number): number {
	const beckY = CY - 1000 + 2500 * Math.sin((x - CX + 20_000) / 7000);
	return Math.abs(y - beckY);
}

export function insideReservoir(x: number, y: number): boolean {
	const dx = x - RESERVOIR.x;
	const dy = y - RESERVOIR.y;
	const c = Math.cos(RESERVOIR.angle);
	const s = Math.sin(RESERVOIR.angle);
	const u = (dx * c + dy * s) / RESERVOIR.a;
	const v = (-dx * s + dy * c) / RESERVOIR.b;
	return u * u + v * v <= 1;
}

/** Catchment outline radius (m) at angle θ around the centre: a lobed, smooth blob. */
function catchmentRadius(theta: number): number {
	return 12_500 + 1800 * Math.sin(2 * theta + 0.6) + 900 * Math.cos(3 * theta - 0.2) + 500 * Math.sin(5 * theta + 1.1);
}

function cellCentre(g: DemoGrid, r: number, c: number): [number, number] {
	return [g.x0 + (c + 0.5) * g.cell, g.y0 - (r + 0.5) * g.cell];
}

/** Soil moisture m³/m³: wetter along the beck and near the reservoir, drier on the rises; water is nodata. */
export function moistureValues(): Float32Array {
	const g = MOISTURE_GRID;
	const noise = valueNoise(11);
	const out = new Float32Array(g.width * g.height);
	for (let r = 0; r < g.height; r++) {
		for (let c = 0; c < g.width; c++) {
			const [x, y] = cellCentre(g, r, c);
			if (insideReservoir(x, y)) {
				out[r * g.width + c] = DEMO_NODATA;
				continue;
			}
			const valley = Math.exp(-((distanceToBeck(x, y) / 4000) ** 2));
			const v = 0.075 + 0.06 * valley + 0.022 * noise((x - CX) / 9000, (y - CY) / 9000);
			out[r * g.width + c] = Math.min(0.165, Math.max(0.025, v));
		}
	}
	return out;
}

/** Vegetation index (NDVI-like, −1..1): saltbush plain 0.3–0.5, cypress-pine stands to 0.8, a bare track; an unflown corner is nodata. */
export function vegetationValues(): Float32Array {
	const g = VEGETATION_GRID;
	const noise = valueNoise(23, 5);
	const stands = valueNoise(37, 3);
	const out = new Float32Array(g.width * g.height);
	for (let r = 0; r < g.height; r++) {
		for (let c = 0; c < g.width; c++) {
			const i = r * g.width + c;
			if (c + r * 0.8 > 265) {
				out[i] = DEMO_NODATA; // south-east corner outside the flight
				continue;
			}
			const [x, y] = cellCentre(g, r, c);
			const forest = Math.min(1, Math.max(0, (stands((x - CX) / 2500, (y - CY) / 2500) + 0.3) * 2.5));
			const track = Math.exp(-(((x - CX + 2700 - (y - CY - 1000) * 0.3) / 25) ** 2));
			const v = 0.36 + 0.4 * forest + 0.06 * noise((x - CX) / 600, (y - CY) / 600) - 0.3 * track;
			out[i] = Math.min(0.88, Math.max(0.05, v));
		}
	}
	return out;
}

/**
 * Terrain height, whole metres above sea level (UInt16): a low plain falling gently to the east,
 * the beck's valley cut a few tens of metres into it, and low sandy rises a kilometre or two
 * across; the reservoir is a flat water surface. No nodata: the model covers the whole grid.
 */
export function terrainValues(): Uint16Array {
	const g = TERRAIN_GRID;
	const rises = valueNoise(41, 3);
	const ripples = valueNoise(53, 2);
	const out = new Uint16Array(g.width * g.height);
	const water = 104;
	for (let r = 0; r < g.height; r++) {
		for (let c = 0; c < g.width; c++) {
			const [x, y] = cellCentre(g, r, c);
			if (insideReservoir(x, y)) {
				out[r * g.width + c] = water;
				continue;
			}
			const valley = Math.exp(-((distanceToBeck(x, y) / 2500) ** 2));
			const h = 132 - 0.0006 * (x - CX) - 22 * valley + 16 * rises((x - CX) / 3000, (y - CY) / 3000) + 3 * ripples((x - CX) / 700, (y - CY) / 700);
			out[r * g.width + c] = Math.round(Math.max(water + 1, h));
		}
	}
	return out;
}

/** A single-band GeoTIFF (Float32 or UInt16, as the values) in the demo's EPSG (UTM 54S), with GDAL_NODATA unless `nodata` is null. */
export function encodeDemoTiff(values: Float32Array | Uint16Array, g: DemoGrid, nodata: number | null = DEMO_NODATA): ArrayBuffer {
	return writeArrayBuffer(values, {
		width: g.width,
		height: g.height,
		ModelPixelScale: [g.cell, g.cell, 0],
		ModelTiepoint: [0, 0, 0, g.x0, g.y0, 0],
		GTModelTypeGeoKey: 1, // projected
		GTRasterTypeGeoKey: 1, // PixelIsArea
		ProjectedCSTypeGeoKey: DEMO_EPSG,
		...(nodata === null ? {} : { GDAL_NODATA: String(nodata) })
	});
}

type LonLat = [number, number];

function toLonLat(points: [number, number][]): LonLat[] {
	const { forward } = transformer(DEMO_EPSG, 4326);
	return points.map(([x, y]) => {
		const [lon, lat] = forward(x, y);
		return [Math.round(lon * 1e6) / 1e6, Math.round(lat * 1e6) / 1e6];
	});
}

/** Closed ring in UTM metres, counter-clockwise (angles increase). */
function catchmentRingUtm(n = 72): [number, number][] {
	const ring: [number, number][] = [];
	for (let k = 0; k < n; k++) {
		const t = (2 * Math.PI * k) / n;
		const rad = catchmentRadius(t);
		ring.push([CENTRE[0] + rad * Math.cos(t), CENTRE[1] + rad * Math.sin(t)]);
	}
	ring.push(ring[0]);
	return ring;
}

function feature(id: string, name: string, ring: LonLat[], extra: Record<string, unknown> = {}) {
	return { type: 'Feature', id, properties: { id, name, ...extra }, geometry: { type: 'Polygon', coordinates: [ring] } };
}

export function studyAreaGeoJson() {
	return { type: 'FeatureCollection', features: [feature('vennarrow-vale', 'Vennarrow Vale catchment', toLonLat(catchmentRingUtm()))] };
}

export function exclusionsGeoJson() {
	const ring: [number, number][] = [];
	const n = 32;
	const c = Math.cos(RESERVOIR.angle);
	const s = Math.sin(RESERVOIR.angle);
	for (let k = 0; k < n; k++) {
		const t = (2 * Math.PI * k) / n;
		const u = RESERVOIR.a * Math.cos(t);
		const v = RESERVOIR.b * Math.sin(t);
		ring.push([RESERVOIR.x + u * c - v * s, RESERVOIR.y + u * s + v * c]);
	}
	ring.push(ring[0]);
	return { type: 'FeatureCollection', features: [feature('vennarrow-water', 'Vennarrow Water (reservoir)', toLonLat(ring), { reason: 'open water' })] };
}

/** Four sub-catchments: sectors of the catchment from its centre, sharing their boundaries exactly. */
export function zonesGeoJson() {
	const zones = [
		{ id: 'north-fell', name: 'North Fell Beck', from: 45, to: 135 },
		{ id: 'west-moss', name: 'West Moss', from: 135, to: 225 },
		{ id: 'south-heath', name: 'South Heath', from: 225, to: 315 },
		{ id: 'eastern-reach', name: 'Eastern Reach', from: -45, to: 45 }
	];
	const perZone = 18;
	return {
		type: 'FeatureCollection',
		features: zones.map((z) => {
			const ring: [number, number][] = [CENTRE];
			for (let k = 0; k <= perZone; k++) {
				const t = ((z.from + ((z.to - z.from) * k) / perZone) * Math.PI) / 180;
				const rad = catchmentRadius(t);
				ring.push([CENTRE[0] + rad * Math.cos(t), CENTRE[1] + rad * Math.sin(t)]);
			}
			ring.push(CENTRE);
			return feature(z.id, z.name, toLonLat(ring));
		})
	};
}

/** 12 soil-moisture probes and 2 cosmic-ray neutron sensors, placed inside the catchment and out of the water. */
export function demoSensors(): SensorRecord[] {
	const rand = mulberry32(2026);
	const sensors: SensorRecord[] = [];
	const { forward } = transformer(DEMO_EPSG, 4326);
	const place = (): [number, number] => {
		for (;;) {
			const t = rand() * 2 * Math.PI;
			const rr = Math.sqrt(rand()) * 0.85 * catchmentRadius(t);
			const x = CENTRE[0] + rr * Math.cos(t);
			const y = CENTRE[1] + rr * Math.sin(t);
			if (!insideReservoir(x, y) && Math.hypot(x - RESERVOIR.x, y - RESERVOIR.y) > 2200) return [x, y];
		}
	};
	const round = (v: number) => Math.round(v * 1e6) / 1e6;
	for (let k = 1; k <= 12; k++) {
		const [lon, lat] = forward(...place());
		sensors.push({
			id: `VV-P${String(k).padStart(2, '0')}`,
			serial: `CFP-${(4100 + k * 37).toString(36).toUpperCase()}`,
			type: DEMO_SENSOR_TYPES[0],
			lon: round(lon),
			lat: round(lat),
			installDate: `2025-0${1 + (k % 6)}-${String(3 + ((k * 5) % 24)).padStart(2, '0')}`,
			status: k === 7 ? 'faulty' : 'active',
			notes: k === 7 ? 'Reads 0 since the April frost; cable to be checked' : null
		});
	}
	// The two neutron sensors stand in the flown area, where the vegetation index helps explain them.
	const crns: [number, number][] = [
		[CX - 2600, CY + 1900],
		[CX - 400, CY - 400]
	];
	crns.forEach(([x, y], k) => {
		const [lon, lat] = forward(x, y);
		sensors.push({
			id: `VV-N${k + 1}`,
			serial: `CFN-${k === 0 ? 'A7Q2' : 'B3K9'}`,
			type: DEMO_SENSOR_TYPES[1],
			lon: round(lon),
			lat: round(lat),
			installDate: k === 0 ? '2024-10-14' : '2025-03-20',
			status: 'active',
			notes: k === 0 ? 'Mast on the open plain near the track' : null
		});
	});
	return sensors;
}

export interface DemoFile {
	name: string;
	bytes: Uint8Array;
}

export function demoFiles(): DemoFile[] {
	const json = (v: unknown) => new TextEncoder().encode(JSON.stringify(v, null, 1) + '\n');
	return [
		{ name: 'soil-moisture.tif', bytes: new Uint8Array(encodeDemoTiff(moistureValues(), MOISTURE_GRID)) },
		{ name: 'vegetation-index.tif', bytes: new Uint8Array(encodeDemoTiff(vegetationValues(), VEGETATION_GRID)) },
		{ name: 'terrain-height.tif', bytes: new Uint8Array(encodeDemoTiff(terrainValues(), TERRAIN_GRID, null)) },
		{ name: 'study-area.geojson', bytes: json(studyAreaGeoJson()) },
		{ name: 'exclusions.geojson', bytes: json(exclusionsGeoJson()) },
		{ name: 'zones.geojson', bytes: json(zonesGeoJson()) },
		{ name: 'sensors.csv', bytes: new TextEncoder().encode(exportSensorsCsv(demoSensors())) }
	];
}

export async function writeDemoData(outDir: string): Promise<string[]> {
	await mkdir(outDir, { recursive: true });
	const written: string[] = [];
	for (const f of demoFiles()) {
		const file = path.join(outDir, f.name);
		await writeFile(file, f.bytes);
		written.push(file);
	}
	return written;
}

const invokedDirectly = process.argv[1] !== undefined && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url);
if (invokedDirectly) {
	const out = process.argv[2] ?? 'data/demo';
	writeDemoData(out).then(
		(files) => console.log(`wrote ${files.length} files:\n${files.join('\n')}`),
		(e: unknown) => {
			console.error(e instanceof Error ? e.message : e);
			process.exitCode = 1;
		}
	);
}
