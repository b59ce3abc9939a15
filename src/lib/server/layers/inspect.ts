/**
 * Inspection of an uploaded raster before it becomes a layer: read one band, check it is usable
 * (a TIFF, georeferenced, north-up, a known CRS, some valid cells, within the size limit) and
 * describe it: size, CRS, resolution, footprint in WGS 84, nodata, statistics and a histogram.
 *
 * processLayer streams: it reads the stored file block row by block row (from a path, a buffer or
 * object storage's byte ranges) and builds the statistics, histogram and screen-sized preview in
 * that one pass; memory is the preview plus two block rows, whatever the raster's size.
 * loadLayer reads a small band whole, for code that needs its samples.
 */
import { decoderPoolFor, openGeoTiff, readGeoTiff, RasterError, pixelToCrs, type DecoderPool, type GeoTiffInput, type RasterBand, type RasterHeader } from '../../geo/geotiff';
import { CrsError, isProjected, transformer } from '../../geo/crs';
import type { GridBand } from '../../importance/grid';
import { LayerRejected, type LayerRejectedCode } from './errors';
import { BandSummary, type BandStats, type Histogram } from './stats';
import { PREVIEW_MAX_SIZE, PreviewAccumulator, previewFromValues, previewSize, type Preview } from './preview';

/** Largest band accepted, in pixels (the same default as the upload limit LAYER_MAX_PIXELS). */
export const DEFAULT_MAX_PIXELS = 250_000_000;

export interface InspectOptions {
	/** Largest width·height accepted; default 250 million. */
	maxPixels?: number;
	/** 1-based band number; default 1. */
	band?: number;
	/** The uploaded file's name, used in messages only. */
	name?: string;
}

export interface LonLatPolygon {
	type: 'Polygon';
	coordinates: [number, number][][];
}

export interface LayerMetadata {
	width: number;
	height: number;
	bandCount: number;
	band: number;
	epsg: number;
	/** 'metre' for projected CRSs, 'degree' for geographic ones. */
	units: 'metre' | 'degree';
	/** Cell size in CRS units. */
	resolution: { x: number; y: number };
	/** Outer upper-left corner in CRS units. */
	origin: { x: number; y: number };
	footprint: {
		/** [west, south, east, north] in WGS 84 degrees, over the raster's densified outline. */
		bbox: [number, number, number, number];
		/** The four corners in WGS 84, exterior ring counter-clockwise (RFC 7946). */
		polygon: LonLatPolygon;
	};
	nodata: number | null;
	stats: BandStats;
	histogram: Histogram;
}

export interface InspectedLayer {
	metadata: LayerMetadata;
	band: RasterBand;
}

const REASON_CODE: Record<string, LayerRejectedCode> = {
	'not-tiff': 'not-tiff',
	corrupt: 'corrupt',
	'no-georeferencing': 'no-georeferencing',
	'unknown-crs': 'unknown-crs',
	'band-missing': 'band-missing',
	unsupported: 'unsupported',
	'too-large': 'too-large',
	'unsafe-blocks': 'unsafe-blocks'
};

function toArrayBuffer(input: ArrayBuffer | Uint8Array): ArrayBuffer {
	if (input instanceof ArrayBuffer) return input;
	const copy = new Uint8Array(input.byteLength);
	copy.set(input);
	return copy.buffer;
}

/** The raster's outline in WGS 84: 4 corners for the polygon, `perSide` points a side for the bbox. */
function footprintOf(band: Pick<RasterHeader, 'epsg' | 'width' | 'height' | 'transform'>, name: string, perSide = 16): LayerMetadata['footprint'] {
	let toLonLat: (x: number, y: number) => [number, number];
	try {
		toLonLat = band.epsg === 4326 ? (x, y) => [x, y] : transformer(band.epsg, 4326).forward;
	} catch (e) {
		throw new LayerRejected('unknown-crs', `${name}: ${e instanceof CrsError ? e.message : 'its CRS cannot be converted to WGS 84'}`);
	}
	const { width: w, height: h, transform: t } = band;
	// Corners in counter-clockwise order on a north-up map: upper-left, lower-left, lower-right, upper-right.
	const cornersPx: [number, number][] = [
		[0, 0],
		[0, h],
		[w, h],
		[w, 0]
	];
	const corners = cornersPx.map(([c, r]) => toLonLat(...pixelToCrs(t, c, r)));
	let west = Infinity;
	let south = Infinity;
	let east = -Infinity;
	let north = -Infinity;
	for (let k = 0; k < 4; k++) {
		const [c0, r0] = cornersPx[k];
		const [c1, r1] = cornersPx[(k + 1) % 4];
		for (let s = 0; s < perSide; s++) {
			const f = s / perSide;
			const [lon, lat] = toLonLat(...pixelToCrs(t, c0 + (c1 - c0) * f, r0 + (r1 - r0) * f));
			west = Math.min(west, lon);
			east = Math.max(east, lon);
			south = Math.min(south, lat);
			north = Math.max(north, lat);
		}
	}
	const bad = corners.some(([lon, lat]) => !Number.isFinite(lon) || !Number.isFinite(lat) || lat < -90 || lat > 90 || lon < -540 || lon > 540);
	if (bad) throw new LayerRejected('no-georeferencing', `${name}: its corners do not fall on the Earth in EPSG:${band.epsg}; check the georeferencing`);
	const ring = [...corners, corners[0]].map(([lon, lat]) => [round(lon), round(lat)] as [number, number]);
	return { bbox: [round(west), round(south), round(east), round(north)], polygon: { type: 'Polygon', coordinates: [ring] } };
}

/** Nine decimals of a degree is about 0.1 mm: enough, and stable in JSON. */
function round(v: number): number {
	return Math.round(v * 1e9) / 1e9;
}

function rejected(e: unknown, name: string): LayerRejected {
	if (e instanceof LayerRejected) return e;
	if (e instanceof RasterError) return new LayerRejected(REASON_CODE[e.reason] ?? 'corrupt', e.message);
	return new LayerRejected('corrupt', `${name}: the file could not be read as a GeoTIFF`);
}

/** A usable layer is north-up, in a CRS we can convert: checked on the header alone. */
function checkHeader(band: Pick<RasterHeader, 'transform' | 'epsg'>, name: string): 'metre' | 'degree' {
	const t = band.transform;
	if (t[2] !== 0 || t[4] !== 0) {
		throw new LayerRejected('rotated', `${name}: the raster is rotated or sheared; warp it to a north-up grid before upload`);
	}
	if (!(t[1] > 0) || !(t[5] < 0)) {
		throw new LayerRejected('rotated', `${name}: the raster is flipped (rows must run north to south, columns west to east)`);
	}
	try {
		return isProjected(band.epsg) ? 'metre' : 'degree';
	} catch (e) {
		throw new LayerRejected('unknown-crs', `${name}: ${e instanceof Error ? e.message : 'unknown CRS'}`);
	}
}

function describeLayer(band: Omit<RasterBand, 'data'>, name: string, units: 'metre' | 'degree', summary: BandSummary): LayerMetadata {
	const stats = summary.stats();
	if (stats.validCount === 0) {
		throw new LayerRejected('all-nodata', `${name}: every cell of band ${band.band} is nodata${band.nodata !== null ? ` (${band.nodata})` : ''}; there is nothing to use`);
	}
	const t = band.transform;
	return {
		width: band.width,
		height: band.height,
		bandCount: band.bandCount,
		band: band.band,
		epsg: band.epsg,
		units,
		resolution: { x: t[1], y: -t[5] },
		origin: { x: t[0], y: t[3] },
		footprint: footprintOf(band, name),
		nodata: band.nodata,
		stats,
		histogram: summary.histogram()
	};
}

/** Read and check one band of an upload, whole; the band is returned for code that needs its samples. */
export async function loadLayer(input: ArrayBuffer | Uint8Array, opts: InspectOptions = {}): Promise<InspectedLayer> {
	const name = opts.name?.trim() || 'The file';
	const maxPixels = opts.maxPixels ?? DEFAULT_MAX_PIXELS;
	if (input.byteLength === 0) throw new LayerRejected('not-tiff', `${name}: the file is empty`);
	let band: RasterBand;
	try {
		band = await readGeoTiff(toArrayBuffer(input), { band: opts.band, name, maxPixels });
	} catch (e) {
		throw rejected(e, name);
	}
	const units = checkHeader(band, name);
	const summary = new BandSummary(band.nodata);
	summary.add(band.data);
	return { metadata: describeLayer(band, name, units, summary), band };
}

export interface ProcessOptions extends InspectOptions {
	/** Decode compressed tiles in two worker threads; default true. */
	parallel?: boolean;
	/** Longest side of the preview; default PREVIEW_MAX_SIZE (512). */
	previewMaxSize?: number;
}

export interface ProcessedLayer {
	metadata: LayerMetadata;
	preview: Preview;
}

/**
 * Check and describe a stored raster in one streamed pass: metadata, statistics, histogram and
 * the preview. The input is read block row by block row, never whole.
 */
export async function processLayer(input: GeoTiffInput, opts: ProcessOptions = {}): Promise<ProcessedLayer> {
	const name = opts.name?.trim() || 'The file';
	const maxPixels = opts.maxPixels ?? DEFAULT_MAX_PIXELS;
	if (input instanceof ArrayBuffer && input.byteLength === 0) throw new LayerRejected('not-tiff', `${name}: the file is empty`);
	try {
		const source = await openGeoTiff(input, { band: opts.band, name, maxPixels });
		let pool: DecoderPool | null = null;
		try {
			if (opts.parallel ?? true) pool = await decoderPoolFor(source);
			const units = checkHeader(source, name);
			const summary = new BandSummary(source.nodata);
			const size = previewSize(source.width, source.height, opts.previewMaxSize ?? PREVIEW_MAX_SIZE);
			const preview = new PreviewAccumulator(source.width, source.height, size.width, size.height, source.nodata);
			for await (const block of source.blocks({ pool })) {
				summary.add(block.data);
				preview.add(block.row0, block.data);
			}
			const metadata = describeLayer(source, name, units, summary);
			return { metadata, preview: previewFromValues(preview.values(), size.width, size.height) };
		} finally {
			await pool?.destroy();
			await source.close();
		}
	} catch (e) {
		throw rejected(e, name);
	}
}

/** Metadata of an upload, or LayerRejected with a message for the user. */
export async function inspectLayer(input: ArrayBuffer | Uint8Array, opts: InspectOptions = {}): Promise<LayerMetadata> {
	return (await loadLayer(input, opts)).metadata;
}

/** The band as a grid for importance recipes (north-up bands only, as loadLayer guarantees). */
export function toGridBand(band: RasterBand): GridBand {
	const t = band.transform;
	if (t[2] !== 0 || t[4] !== 0 || !(t[1] > 0) || !(t[5] < 0)) throw new LayerRejected('rotated', 'the raster is not on a north-up grid');
	return {
		grid: { epsg: band.epsg, width: band.width, height: band.height, x0: t[0], y0: t[3], dx: t[1], dy: -t[5], units: isProjected(band.epsg) ? 'metre' : 'degree' },
		data: band.data,
		nodata: band.nodata
	};
}
