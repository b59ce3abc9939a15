/**
 * Coordinate reference systems Cairnfield knows, as proj4 definitions, and the choice of a
 * metric working CRS for a network.
 */
import proj4 from 'proj4';

export class CrsError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'CrsError';
	}
}

const WGS84 = '+proj=longlat +datum=WGS84 +no_defs';

/** The fixed (non-UTM) definitions; parameters from the EPSG dataset's definitions of each code. */
const FIXED: Record<number, string> = {
	4326: WGS84,
	// ETRS89 geographic; treated as WGS 84 (they differ by well under a metre for siting purposes).
	4258: '+proj=longlat +ellps=GRS80 +towgs84=0,0,0,0,0,0,0 +no_defs',
	3857: '+proj=merc +a=6378137 +b=6378137 +lat_ts=0 +lon_0=0 +x_0=0 +y_0=0 +k=1 +units=m +nadgrids=@null +wktext +no_defs',
	// EASE-Grid 2.0 global: Lambert cylindrical equal-area on WGS 84, standard parallel 30°.
	6933: '+proj=cea +lat_ts=30 +lon_0=0 +x_0=0 +y_0=0 +datum=WGS84 +units=m +no_defs',
	// ETRS89-extended / LAEA Europe.
	3035: '+proj=laea +lat_0=52 +lon_0=10 +x_0=4321000 +y_0=3210000 +ellps=GRS80 +towgs84=0,0,0,0,0,0,0 +units=m +no_defs'
};

const registered = new Map<number, string>();

/**
 * Projected CRSs whose metres are not ground metres over most of the globe: Web Mercator's scale
 * is 1/cos φ (1.5 at 48°), EASE-Grid 2.0's cylindrical equal-area stretches east-west and shrinks
 * north-south away from ±30°. Sensing radii and travel in metres would be wrong in them, so they
 * are never chosen as a working CRS automatically (an explicit override is still honoured).
 */
const GLOBAL_DISTORTED = new Set<number>([3857, 6933]);

/** Definition of UTM zone codes 32601–32660 (north) and 32701–32760 (south), generated. */
function utmDefinition(epsg: number): string | null {
	const north = epsg >= 32601 && epsg <= 32660;
	const south = epsg >= 32701 && epsg <= 32760;
	if (!north && !south) return null;
	const zone = epsg % 100;
	return `+proj=utm +zone=${zone}${south ? ' +south' : ''} +datum=WGS84 +units=m +no_defs`;
}

/**
 * Register (or replace) a proj4 definition for an EPSG code not built in. Mark `globalDistorted`
 * for world-wide projections whose scale is far from 1 (see GLOBAL_DISTORTED).
 */
export function registerCrs(epsg: number, proj4Definition: string, opts: { globalDistorted?: boolean } = {}): void {
	if (!Number.isInteger(epsg) || epsg <= 0) throw new CrsError(`"${epsg}" is not an EPSG code`);
	try {
		// Validate by building a converter once.
		proj4(WGS84, proj4Definition);
	} catch (e) {
		throw new CrsError(`EPSG:${epsg}: invalid proj4 definition (${e instanceof Error ? e.message : String(e)})`);
	}
	registered.set(epsg, proj4Definition);
	proj4.defs(`EPSG:${epsg}`, proj4Definition);
	if (opts.globalDistorted) GLOBAL_DISTORTED.add(epsg);
	else GLOBAL_DISTORTED.delete(epsg);
}

/** The proj4 definition of an EPSG code, or null when Cairnfield has none. */
export function crsDefinition(epsg: number): string | null {
	return registered.get(epsg) ?? FIXED[epsg] ?? utmDefinition(epsg);
}

export function isKnownCrs(epsg: number): boolean {
	return crsDefinition(epsg) !== null;
}

function requireDefinition(epsg: number): string {
	const def = crsDefinition(epsg);
	if (def === null) {
		throw new CrsError(`unknown CRS EPSG:${epsg}: Cairnfield has no definition for it (known: 4326, 4258, 3857, 6933, 3035, UTM 326xx/327xx)`);
	}
	return def;
}

/** True when the CRS has metric projected coordinates (false for geographic lon/lat). */
export function isProjected(epsg: number): boolean {
	return !/\+proj=longlat\b/.test(requireDefinition(epsg));
}

/** Projected, and with ground-true metres near any network (not Web Mercator, not EASE-Grid 2.0). */
function isSuitableWorkingCrs(epsg: number): boolean {
	return isProjected(epsg) && !GLOBAL_DISTORTED.has(epsg);
}

/** Parse "EPSG:32633", "epsg:32633" or "32633" to 32633; anything else is a CrsError. */
export function parseEpsg(text: string | number): number {
	if (typeof text === 'number') {
		if (Number.isInteger(text) && text > 0) return text;
		throw new CrsError(`"${text}" is not an EPSG code`);
	}
	const m = /^\s*(?:epsg:)?(\d{4,6})\s*$/i.exec(text);
	if (!m) throw new CrsError(`"${text}" is not a CRS of the form EPSG:n`);
	return Number(m[1]);
}

/**
 * The UTM zone (as its WGS 84 EPSG code) that contains a point. Handles the two exceptions of the
 * UTM grid: zone 32V widened over south-west Norway and zones 31X/33X/35X/37X over Svalbard.
 * Outside 80°S–84°N UTM is not defined (the polar areas use UPS): a CrsError asks for an explicit CRS.
 */
export function utmZoneFor(lon: number, lat: number): number {
	if (!Number.isFinite(lon) || !Number.isFinite(lat) || lat < -90 || lat > 90) {
		throw new CrsError(`(${lon}, ${lat}) is not a longitude/latitude`);
	}
	if (lat > 84 || lat < -80) {
		throw new CrsError(`latitude ${lat} is outside the UTM grid (80°S–84°N); choose a working CRS explicitly`);
	}
	const l = ((((lon + 180) % 360) + 360) % 360) - 180; // normalise to [-180, 180)
	let zone = Math.floor((l + 180) / 6) + 1;
	if (lat >= 56 && lat < 64 && l >= 3 && l < 12) zone = 32;
	if (lat >= 72 && lat <= 84) {
		if (l >= 0 && l < 9) zone = 31;
		else if (l >= 9 && l < 21) zone = 33;
		else if (l >= 21 && l < 33) zone = 35;
		else if (l >= 33 && l < 42) zone = 37;
	}
	return (lat >= 0 ? 32600 : 32700) + zone;
}

/**
 * The one rule for a network's working CRS, in order:
 *  1. an explicit choice wins (it must be known and projected);
 *  2. else the importance grid's own CRS when it is projected with ground-true metres
 *     (isSuitableWorkingCrs: not geographic, not Web Mercator, not EASE-Grid 2.0);
 *  3. else the UTM zone of the area's centre (lon/lat).
 * Null when none applies (no explicit choice, no suitable grid, no centre).
 */
export function decideWorkingCrs(facts: { explicit?: number | string | null; gridEpsg?: number | null; centreLonLat?: readonly [number, number] | null }): number | null {
	const { explicit, gridEpsg, centreLonLat } = facts;
	if (explicit !== undefined && explicit !== null && explicit !== '') {
		const epsg = parseEpsg(explicit);
		if (!isProjected(epsg)) {
			throw new CrsError(`EPSG:${epsg} is geographic (degrees); the working CRS must be projected in metres`);
		}
		return epsg;
	}
	if (gridEpsg !== undefined && gridEpsg !== null && isSuitableWorkingCrs(gridEpsg)) return gridEpsg;
	return centreLonLat ? utmZoneFor(centreLonLat[0], centreLonLat[1]) : null;
}

/** decideWorkingCrs for a raster whose centre is known: never null. */
export function chooseWorkingCrs(rasterEpsg: number, centreLonLat: readonly [number, number], override?: number | string | null): number {
	return decideWorkingCrs({ explicit: override, gridEpsg: rasterEpsg, centreLonLat }) as number;
}

export type PointTransform = (x: number, y: number) => [number, number];

/** A point transform from one EPSG CRS to another (proj4; no datum grids). */
export function transformer(fromEpsg: number, toEpsg: number): { forward: PointTransform; inverse: PointTransform } {
	const conv = proj4(requireDefinition(fromEpsg), requireDefinition(toEpsg));
	return {
		forward: (x, y) => {
			const p = conv.forward([x, y]);
			return [p[0], p[1]];
		},
		inverse: (x, y) => {
			const p = conv.inverse([x, y]);
			return [p[0], p[1]];
		}
	};
}

/** "EPSG:n" label used in WorkingGrid.crs and in outputs. */
export function crsLabel(epsg: number): string {
	return `EPSG:${epsg}`;
}
