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

/** A network in a list: no geometry (getNetwork has it). */
export type NetworkSummary = Omit<Network, 'studyArea' | 'exclusions'> & { hasStudyArea: boolean };
export interface NetworkList {
	networks: NetworkSummary[];
	total: number;
	page: number;
	pages: number;
	perPage: number;
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

// SensorStatus ('active' | 'faulty' | 'retired') is the sensors block's, below.

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
	/**
	 * The job drawing the importance map in this CRS while it is not ready (follow it with getJob,
	 * then load the map again); null when the image is there or there is none to draw.
	 */
	importanceJob: MapImportanceJob | null;
}

export interface MapImportanceJob {
	id: number;
	state: Job['state'];
	/** Why it failed (state 'failed'), for people. */
	error: string | null;
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

export interface MapLegendStop {
	value: number;
	colour: string;
}

export interface MapBackdrop {
	/** 'importance' = the network's current importance map; 'layer' = a layer preview. */
	kind: 'importance' | 'layer';
	label: string;
	url: string;
	/** The CRS of the image and its bounds: the working CRS, or EPSG:3857 for the web maps. */
	epsg: number;
	/** [minX, minY, maxX, maxY] in `epsg` (unlike the document's other geometry, which is in the working CRS). */
	bounds: MapBounds;
	min: number;
	max: number;
	legend: MapLegendStop[];
	/** True when the bounds were converted from another CRS (the image is then approximate). */
	approximate: boolean;
}

export interface MapContour {
	level: number;
	/** Lines (open, or closed when first = last) in the map CRS. */
	lines: MapPoint[][];
}

/**
 * What a server-drawn map (working CRS, SVG) needs to become a web map in the browser when the
 * deployment sets a basemap: the working CRS's proj4 definition and the importance overlay in
 * EPSG:3857 (null without importance).
 */
export interface WebMapExtras {
	proj4: string;
	overlay: { url: string; epsg: number; bounds: MapBounds } | null;
}

// (map types end)

// ---- Background jobs (types) ------------------------------------------------------------
export type JobState = 'queued' | 'running' | 'finished' | 'failed' | 'cancelled';

/** A job of the durable queue, as GET /api/v1/networks/:id/jobs/:jobId returns it. */
export interface Job {
	id: number;
	kind: string;
	networkId: number | null;
	state: JobState;
	/** What the job last reported: e.g. {iteration, maxIterations, cost, coverage} for a placement. */
	progress: Record<string, unknown> | null;
	/** Set once the job finished. */
	result: unknown;
	/** Why it failed or was cancelled (or the last error before a retry). */
	error: string | null;
	attempts: number;
	maxAttempts: number;
	cancelRequested: boolean;
	createdAt: string;
	startedAt: string | null;
	finishedAt: string | null;
}

/** A fraction 0..1 of the work done, when the progress says so. */
export function jobFraction(job: Pick<Job, 'state' | 'progress'>): number | null {
	if (job.state === 'finished') return 1;
	const p = job.progress;
	if (!p) return null;
	if (typeof p.iteration === 'number' && typeof p.maxIterations === 'number' && p.maxIterations > 0) return Math.min(1, p.iteration / p.maxIterations);
	if (typeof p.fraction === 'number') return Math.max(0, Math.min(1, p.fraction));
	return null;
}

export const JOB_ENDED: readonly JobState[] = ['finished', 'failed', 'cancelled'];
// (jobs types end)

// ---- Layers and importance recipes (types) ----------------------------------------------
export const LAYER_KINDS = ['soil_moisture', 'vegetation_index', 'elevation', 'other'] as const;
export type LayerKind = (typeof LAYER_KINDS)[number];
export const LAYER_PLATFORMS = ['satellite', 'aircraft', 'drone', 'model', 'other'] as const;
export type LayerPlatform = (typeof LAYER_PLATFORMS)[number];

export interface Layer {
	id: number;
	name: string;
	kind: LayerKind;
	units: string;
	acquiredOn: string | null;
	platform: LayerPlatform;
	status: 'uploading' | 'processing' | 'ready' | 'failed';
	error: string | null;
	originalName: string;
	sizeBytes: number;
	band: number;
	bandCount: number | null;
	width: number | null;
	height: number | null;
	epsg: number | null;
	resolution: { x: number; y: number } | null;
	nodata: number | null;
	footprint: { bbox: [number, number, number, number]; polygon: { type: 'Polygon'; coordinates: [number, number][][] } } | null;
	stats: { min: number; max: number; mean: number; std: number; validCount: number } | null;
	histogram: { edges: number[]; counts: number[] } | null;
	hasPreview: boolean;
	createdAt: string;
}

export interface LayerUploadMeta {
	name: string;
	kind: LayerKind;
	units?: string;
	acquiredOn?: string;
	platform?: LayerPlatform;
	band?: number;
	fileName?: string;
}

export type RecipeTransform = 'identity' | 'invert' | 'minmax' | 'band' | 'variability';

export interface RecipeStepInput {
	layerId: string;
	transform: RecipeTransform;
	weight: number;
	params?: { lo?: number; hi?: number; soft?: number; distanceM?: number };
}

export interface RecipeDefinition {
	layers: RecipeStepInput[];
}

export interface RecipeVersion {
	id: number;
	recipeId: number;
	version: number;
	definition: RecipeDefinition;
	note: string;
	createdBy: string | null;
	createdAt: string;
	hasSurface: boolean;
}

export interface Recipe {
	id: number;
	name: string;
	latestVersion: number;
	versions: RecipeVersion[];
}

export interface RecipePreview {
	/** PNG, base64. */
	png: string;
	width: number;
	height: number;
	grid: { epsg: number; width: number; height: number; x0: number; y0: number; dx: number; dy: number; units?: 'metre' | 'degree' };
	validCount: number;
	min: number;
	max: number;
	mean: number;
	legend: { value: number; colour: string }[];
}

/** URL of a layer's preview PNG. */
export function layerPreviewUrl(networkId: number, layerId: number, base = '/api/v1'): string {
	return `${base}/networks/${networkId}/layers/${layerId}/preview.png`;
}

/** Query string carrying an upload's metadata (the body is the file itself). */
export function layerUploadQuery(meta: LayerUploadMeta): string {
	const q = new URLSearchParams();
	for (const [k, v] of Object.entries(meta)) if (v !== undefined && v !== '') q.set(k, String(v));
	return q.toString();
}
// ---- (layers and recipes types end) -------------------------------------------------------

// ---- Sensors, study area and zones (types) --------------------------------------------------
export type { Mobility } from '../engine/types';
import type { Mobility } from '../engine/types';
export const SENSOR_STATUSES = ['active', 'faulty', 'retired'] as const;
export type SensorStatus = (typeof SENSOR_STATUSES)[number];
export type ZoneSetKind = 'uploaded' | 'grid' | 'computed';

export interface SensorType {
	id: number;
	name: string;
	radiusM: number;
	/** `point`: a probe (its radius is a siting choice); `area`: a large-footprint sensor (its radius is physical). */
	footprint: 'point' | 'area';
	mobility: Mobility;
	relocationMinutes: number | null;
	notes: string;
}
export interface SensorTypeInput {
	name: string;
	radiusM: number;
	/** Default `point`. */
	footprint?: 'point' | 'area';
	mobility: Mobility;
	relocationMinutes?: number | null;
	notes?: string;
}
export interface Sensor {
	id: number;
	code: string;
	serial: string;
	typeId: number;
	type: string;
	lon: number;
	lat: number;
	/** In the working CRS (metres), null when it is not known. */
	x: number | null;
	y: number | null;
	status: SensorStatus;
	installedOn: string | null;
	notes: string;
	version: number;
}
/** lon/lat (positionMode 'lonlat', the default) or x/y in the working CRS (positionMode 'xy'). */
export interface SensorInput {
	code: string;
	serial: string;
	typeId: number;
	positionMode?: 'lonlat' | 'xy';
	lon?: number;
	lat?: number;
	x?: number;
	y?: number;
	installedOn?: string | null;
	status?: SensorStatus;
	notes?: string;
}
export interface SensorListQuery {
	sort?: 'code' | 'serial' | 'type' | 'status' | 'installed_on' | 'lon' | 'lat';
	dir?: 'asc' | 'desc';
	type?: number;
	status?: SensorStatus;
	q?: string;
	page?: number;
	perPage?: 10 | 25 | 50 | 100;
}
export interface SensorList {
	sensors: Sensor[];
	total: number;
	page: number;
	pages: number;
	perPage: number;
	workingCrs: number | null;
}
export interface GeoMultiPolygon {
	type: 'MultiPolygon';
	coordinates: [number, number][][][];
}
export interface ExclusionFeature {
	type: 'Feature';
	properties: { name: string };
	geometry: GeoMultiPolygon;
}
export interface NetworkArea {
	version: number;
	studyArea: GeoMultiPolygon | null;
	exclusions: ExclusionFeature[];
}
export interface Zone {
	id: number;
	code: string;
	name: string;
	importanceShare: number | null;
	sensorCount: number;
	geometry?: GeoMultiPolygon;
}
export interface ZoneSet {
	id: number;
	name: string;
	kind: ZoneSetKind;
	params: Record<string, unknown> | null;
	inUse: boolean;
	recipeVersionId: number | null;
	createdAt: string;
	zones: Zone[];
}
export type ZoneSetInput = { kind: 'uploaded'; name?: string; geojson: unknown } | { kind: 'grid'; name?: string; cellSizeKm: number } | { kind: 'computed'; name?: string; k: number };
// ---- (sensors and zones types end) -----------------------------------------------------------

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
	const getJob = (networkId: number, jobId: number) => call<{ job: Job }>('GET', `/networks/${networkId}/jobs/${jobId}`).then((r) => r.job);
	/** Polls a job until it finished, failed or was cancelled; `onProgress` sees every poll. */
	async function waitForJob(networkId: number, jobId: number, opts: { intervalMs?: number; timeoutMs?: number; onProgress?: (job: Job) => void } = {}): Promise<Job> {
		const end = Date.now() + (opts.timeoutMs ?? 10 * 60_000);
		for (;;) {
			const job = await getJob(networkId, jobId);
			opts.onProgress?.(job);
			if (JOB_ENDED.includes(job.state)) return job;
			if (Date.now() > end) throw new ApiClientError(504, 'timeout', `Job ${jobId} did not end in time.`);
			await new Promise((r) => setTimeout(r, opts.intervalMs ?? 500));
		}
	}
	async function savedVersion(networkId: number, queued: Promise<{ job: Job }>, onProgress?: (job: Job) => void): Promise<RecipeVersion> {
		const { job } = await queued;
		const done = await waitForJob(networkId, job.id, { intervalMs: 250, onProgress });
		if (done.state !== 'finished') throw new ApiClientError(422, done.state === 'cancelled' ? 'cancelled' : 'recipe_failed', done.error ?? 'The version could not be saved.', { layers: done.error ?? '' });
		return (done.result as { version: RecipeVersion }).version;
	}
	return {
		// Jobs
		getJob,
		waitForJob,
		cancelJob: (networkId: number, jobId: number) => call<{ job: Job }>('DELETE', `/networks/${networkId}/jobs/${jobId}`).then((r) => r.job),
		// (jobs calls end)
		listNetworks: (query: { page?: number; perPage?: 10 | 25 | 50 | 100 } = {}) =>
			call<NetworkList>('GET', `/networks?${new URLSearchParams(Object.entries(query).map(([k, v]) => [k, String(v)]))}`),
		getNetwork: (id: number) => call<{ network: Network }>('GET', `/networks/${id}`).then((r) => r.network),
		createNetwork: (input: { name: string; description?: string; crsEpsg?: number | null; publicText?: string }) =>
			call<{ network: Network }>('POST', '/networks', input).then((r) => r.network),
		updateNetwork: (id: number, patch: NetworkPatch) => call<{ network: Network }>('POST', `/networks/${id}`, patch).then((r) => r.network),
		// Map
		getNetworkMap: (id: number) => call<{ map: MapDocument }>('GET', `/networks/${id}/map`).then((r) => r.map),
		// (map calls end)
		// ---- Layers and importance recipes ----
		listLayers: (networkId: number) => call<{ layers: Layer[] }>('GET', `/networks/${networkId}/layers`).then((r) => r.layers),
		getLayer: (networkId: number, layerId: number) => call<{ layer: Layer }>('GET', `/networks/${networkId}/layers/${layerId}`).then((r) => r.layer),
		deleteLayer: (networkId: number, layerId: number) => call<null>('DELETE', `/networks/${networkId}/layers/${layerId}`),
		/**
		 * Whole-body upload through fetch (scripts, tests), then follows the processing job: resolves
		 * with the ready layer, or throws 422 with the reason the raster was refused. The page uses
		 * XMLHttpRequest for upload progress and follows the job itself.
		 */
		uploadLayer: async (networkId: number, meta: LayerUploadMeta, file: Blob | Uint8Array) => {
			const res = await fetchFn(`${base}/networks/${networkId}/layers?${layerUploadQuery(meta)}`, { method: 'POST', headers: { accept: 'application/json', 'content-type': 'application/octet-stream' }, body: file as BodyInit });
			const data = await res.json().catch(() => null);
			if (!res.ok) {
				const e = (data as ApiErrorBody | null)?.error;
				throw new ApiClientError(res.status, e?.code ?? 'http_error', e?.message ?? res.statusText, e?.fields);
			}
			const { layer, job } = data as { layer: Layer; job: Job };
			const done = await waitForJob(networkId, job.id);
			if (done.state !== 'finished') throw new ApiClientError(422, done.state === 'cancelled' ? 'cancelled' : 'rejected', done.error ?? 'The layer could not be processed.', { file: done.error ?? '' });
			return call<{ layer: Layer }>('GET', `/networks/${networkId}/layers/${layer.id}`).then((r) => r.layer);
		},
		listRecipes: (networkId: number) => call<{ recipes: Recipe[]; currentVersionId: number | null }>('GET', `/networks/${networkId}/recipes`),
		getRecipe: (networkId: number, recipeId: number) => call<{ recipe: Recipe }>('GET', `/networks/${networkId}/recipes/${recipeId}`).then((r) => r.recipe),
		listRecipeVersions: (networkId: number, recipeId: number) => call<{ versions: RecipeVersion[] }>('GET', `/networks/${networkId}/recipes/${recipeId}/versions`).then((r) => r.versions),
		/** Both queue a job that saves the version with its importance surface (202 {job}); followed here until the version exists. */
		createRecipe: (networkId: number, input: { name: string; definition: RecipeDefinition; note?: string }, opts: { onProgress?: (job: Job) => void } = {}) =>
			savedVersion(networkId, call<{ job: Job }>('POST', `/networks/${networkId}/recipes`, input), opts.onProgress),
		addRecipeVersion: (networkId: number, recipeId: number, input: { definition: RecipeDefinition; note?: string }, opts: { onProgress?: (job: Job) => void } = {}) =>
			savedVersion(networkId, call<{ job: Job }>('POST', `/networks/${networkId}/recipes/${recipeId}/versions`, input), opts.onProgress),
		deleteRecipe: (networkId: number, recipeId: number) => call<null>('DELETE', `/networks/${networkId}/recipes/${recipeId}`),
		/** Queues the preview job (202 {job}), follows it and resolves with the preview; 422 with the reason if it failed. */
		previewRecipe: async (networkId: number, definition: RecipeDefinition, opts: { onProgress?: (job: Job) => void } = {}) => {
			const { job } = await call<{ job: Job }>('POST', `/networks/${networkId}/recipes/preview`, { definition });
			const done = await waitForJob(networkId, job.id, { intervalMs: 250, onProgress: opts.onProgress });
			if (done.state !== 'finished') throw new ApiClientError(422, done.state === 'cancelled' ? 'cancelled' : 'preview_failed', done.error ?? 'The preview could not be computed.');
			return (done.result as { preview: RecipePreview }).preview;
		},
		useRecipeVersion: (networkId: number, versionId: number) => call<{ versionId: number }>('POST', `/networks/${networkId}/recipes/current`, { versionId }),
		// ---- (layers and recipes end) ----
		// ---- Sensors, study area and zones ----
		listSensorTypes: (networkId: number) => call<{ sensorTypes: SensorType[] }>('GET', `/networks/${networkId}/sensor-types`).then((r) => r.sensorTypes),
		createSensorType: (networkId: number, input: SensorTypeInput) => call<{ sensorType: SensorType }>('POST', `/networks/${networkId}/sensor-types`, input).then((r) => r.sensorType),
		updateSensorType: (networkId: number, typeId: number, input: SensorTypeInput) => call<{ sensorType: SensorType }>('POST', `/networks/${networkId}/sensor-types/${typeId}`, input).then((r) => r.sensorType),
		deleteSensorType: (networkId: number, typeId: number) => call<null>('DELETE', `/networks/${networkId}/sensor-types/${typeId}`),
		listSensors: (networkId: number, query: SensorListQuery = {}) => {
			const p = new URLSearchParams(Object.entries(query).filter(([, v]) => v !== undefined && v !== '').map(([k, v]) => [k, String(v)]));
			return call<SensorList>('GET', `/networks/${networkId}/sensors${p.size ? `?${p}` : ''}`);
		},
		getSensor: (networkId: number, sensorId: number) => call<{ sensor: Sensor }>('GET', `/networks/${networkId}/sensors/${sensorId}`).then((r) => r.sensor),
		createSensor: (networkId: number, input: SensorInput) => call<{ sensor: Sensor }>('POST', `/networks/${networkId}/sensors`, input).then((r) => r.sensor),
		updateSensor: (networkId: number, sensorId: number, input: SensorInput & { version: number }) => call<{ sensor: Sensor }>('POST', `/networks/${networkId}/sensors/${sensorId}`, input).then((r) => r.sensor),
		deleteSensor: (networkId: number, sensorId: number, version: number) => call<null>('DELETE', `/networks/${networkId}/sensors/${sensorId}?version=${version}`),
		/** URL of the inventory download (CSV or GeoJSON), for a link or a fetch. */
		sensorExportUrl: (networkId: number, format: 'csv' | 'geojson') => `${base}/networks/${networkId}/sensors?format=${format}`,
		getArea: (networkId: number) => call<{ area: NetworkArea }>('GET', `/networks/${networkId}/area`).then((r) => r.area),
		setArea: (networkId: number, input: { version: number; studyArea?: unknown; exclusions?: unknown[] }) => call<{ area: NetworkArea }>('POST', `/networks/${networkId}/area`, input).then((r) => r.area),
		listZoneSets: (networkId: number, opts: { geometry?: boolean } = {}) => call<{ zoneSets: ZoneSet[] }>('GET', `/networks/${networkId}/zone-sets${opts.geometry ? '?geometry=1' : ''}`).then((r) => r.zoneSets),
		getZoneSet: (networkId: number, zoneSetId: number) => call<{ zoneSet: ZoneSet }>('GET', `/networks/${networkId}/zone-sets/${zoneSetId}`).then((r) => r.zoneSet),
		/**
		 * Computed zones come from a job (202 {job}); uploaded and grid zones are stored at once (201
		 * {zoneSet, job}) and their shares measured by the job. Followed here until the zone set
		 * exists with its shares.
		 */
		createZoneSet: async (networkId: number, input: ZoneSetInput) => {
			const r = await call<{ zoneSet?: ZoneSet; job?: Job | null }>('POST', `/networks/${networkId}/zone-sets`, input);
			if (r.zoneSet && !r.job) return r.zoneSet;
			const done = await waitForJob(networkId, r.job!.id);
			if (done.state !== 'finished') throw new ApiClientError(422, 'zones_failed', done.error ?? 'The zones could not be computed.', { k: done.error ?? '' });
			return call<{ zoneSet: ZoneSet }>('GET', `/networks/${networkId}/zone-sets/${(done.result as { zoneSetId: number }).zoneSetId}`).then((x) => x.zoneSet);
		},
		useZoneSet: (networkId: number, zoneSetId: number, inUse = true) => call<{ zoneSet: ZoneSet }>('POST', `/networks/${networkId}/zone-sets/${zoneSetId}`, { inUse }).then((r) => r.zoneSet),
		deleteZoneSet: (networkId: number, zoneSetId: number) => call<null>('DELETE', `/networks/${networkId}/zone-sets/${zoneSetId}`),
		// ---- (sensors and zones end) ----
		call
	};
}

export type ApiClient = ReturnType<typeof createApiClient>;
