/**
 * A small typed client for Cairnfield's own JSON API (/api/v1). Pages and scripts use it instead
 * of hand-written fetch calls. Pass SvelteKit's `fetch` in load functions.
 */
export interface ApiErrorBody {
	error: { code: string; message: string; fields?: Record<string, string> };
}

export class ApiClientError extends Error {
	constructor(
		public status: number,
		public code: string,
		message: string,
		public fields?: Record<string, string>
	) {
		super(message);
	}
}

export interface Network {
	id: number;
	organisationId: number;
	slug: string;
	name: string;
	description: string;
	crsEpsg: number | null;
	studyArea: unknown | null;
	exclusions: unknown | null;
	publication: 'private' | 'published';
	publicText: string;
	version: number;
	createdAt: string;
	updatedAt: string;
}

export interface NetworkPatch {
	version: number;
	name?: string;
	slug?: string;
	description?: string;
	crsEpsg?: number | null;
	publicText?: string;
	publication?: 'private' | 'published';
}

// ---------------------------------------------------------------------------------------------
// Network map (GET /api/v1/networks/:id/map), assembled in src/lib/server/services/map-data.ts

/** [x, y] in the map's CRS (working CRS metres). */
export type MapPoint = [number, number];
/** Rings of one shape, drawn with the even-odd rule (holes and multi-part shapes alike). */
export type MapRings = MapPoint[][];
/** [minX, minY, maxX, maxY] in the map's CRS. */
export type MapBounds = [number, number, number, number];

export type SensorStatus = 'active' | 'faulty' | 'retired';

export interface MapDocument {
	network: { id: number; name: string };
	/** The working CRS the map is drawn in; null when the network has nothing with a position yet. */
	crs: { epsg: number; proj4: string } | null;
	extent: MapBounds | null;
	studyArea: MapRings;
	exclusions: MapRings;
	zoneSet: { id: number; name: string; kind: string } | null;
	zones: MapZone[];
	sensorTypes: MapSensorType[];
	sensors: MapSensor[];
	backdrop: MapBackdrop | null;
	contours: MapContour[];
}

export interface MapZone {
	id: number;
	code: string;
	name: string;
	/** Share of the importance mass (0..1) as measured when the zone set was made; null if never. */
	importanceShare: number | null;
	/** Sensors (not retired) standing inside the zone. */
	sensorCount: number;
	rings: MapRings;
	/** Where the label goes (area centroid of the largest ring). */
	labelAt: MapPoint;
}

export interface MapSensorType {
	id: number;
	name: string;
	radiusM: number;
	mobility: 'fixed' | 'relocatable' | 'mobile';
}

export interface MapSensor {
	id: number;
	code: string;
	serial: string;
	typeId: number;
	status: SensorStatus;
	lon: number;
	lat: number;
	x: number;
	y: number;
	installedOn: string | null;
}

export interface LegendStop {
	value: number;
	colour: string;
}

export interface MapBackdrop {
	/** 'importance' = the network's current importance surface; 'layer' = a layer preview. */
	kind: 'importance' | 'layer';
	label: string;
	url: string;
	bounds: MapBounds;
	min: number;
	max: number;
	legend: LegendStop[];
	/** True when the bounds were converted from another CRS (the image is then approximate). */
	approximate: boolean;
}

export interface MapContour {
	level: number;
	/** MultiPolygon coordinates in the map CRS: polygons → rings → points. */
	polygons: MapPoint[][][];
}

// (map types end)

type Fetch = typeof fetch;

export function createApiClient(fetchFn: Fetch = fetch, base = '/api/v1') {
	async function call<T>(method: string, path: string, body?: unknown): Promise<T> {
		const res = await fetchFn(`${base}${path}`, {
			method,
			headers: body === undefined ? { accept: 'application/json' } : { accept: 'application/json', 'content-type': 'application/json' },
			body: body === undefined ? undefined : JSON.stringify(body)
		});
		const text = await res.text();
		const data = text ? JSON.parse(text) : null;
		if (!res.ok) {
			const e = (data as ApiErrorBody | null)?.error;
			throw new ApiClientError(res.status, e?.code ?? 'http_error', e?.message ?? res.statusText, e?.fields);
		}
		return data as T;
	}
	return {
		listNetworks: () => call<{ networks: Network[] }>('GET', '/networks').then((r) => r.networks),
		getNetwork: (id: number) => call<{ network: Network }>('GET', `/networks/${id}`).then((r) => r.network),
		createNetwork: (input: { name: string; description?: string; crsEpsg?: number | null; publicText?: string }) =>
			call<{ network: Network }>('POST', '/networks', input).then((r) => r.network),
		updateNetwork: (id: number, patch: NetworkPatch) => call<{ network: Network }>('POST', `/networks/${id}`, patch).then((r) => r.network),
		// Map
		getNetworkMap: (id: number) => call<{ map: MapDocument }>('GET', `/networks/${id}/map`).then((r) => r.map),
		// (map calls end)
		call
	};
}

export type ApiClient = ReturnType<typeof createApiClient>;
