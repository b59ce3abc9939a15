/**
 * Inspection of an uploaded raster before it becomes a layer: read one band, check it is usable
 * (a TIFF, georeferenced, north-up, a known CRS, some valid cells, within the size limit) and
 * describe it: size, CRS, resolution, footprint in WGS 84, nodata, statistics and a histogram.
 *
 * Uploads are stored as files (see ../storage); inspection works on the whole file in memory. That
 * is fine up to the pixel limit: the default of 25 million pixels is at most 200 MB of Float64
 * samples plus the file itself, so the route that accepts uploads should cap the request body at
 * about the same size. Larger rasters should be tiled or resampled before upload.
 */
import { readGeoTiff, RasterError, pixelToCrs, type RasterBand } from '../../geo/geotiff';
import { CrsError, isProjected, transformer } from '../../geo/crs';
import type { GridBand } from '../../importance/grid';
import { LayerRejected, type LayerRejectedCode } from './errors';
import { bandHistogram, bandStats, type BandStats, type Histogram } from './stats';

export const DEFAULT_MAX_PIXELS = 25_000_000;

export interface InspectOptions {
	/** Largest width·height accepted; default 25 million. */
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
function footprintOf(band: RasterBand, name: string, perSide = 16): LayerMetadata['footprint'] {
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

/** Read and check one band of an upload; the band is returned for previews and importance. */
export async function loadLayer(input: ArrayBuffer | Uint8Array, opts: InspectOptions = {}): Promise<InspectedLayer> {
	const name = opts.name?.trim() || 'The file';
	const maxPixels = opts.maxPixels ?? DEFAULT_MAX_PIXELS;
	if (input.byteLength === 0) throw new LayerRejected('not-tiff', `${name}: the file is empty`);
	let band: RasterBand;
	try {
		band = await readGeoTiff(toArrayBuffer(input), { band: opts.band, name, maxPixels });
	} catch (e) {
		if (e instanceof RasterError) throw new LayerRejected(REASON_CODE[e.reason] ?? 'corrupt', e.message);
		throw new LayerRejected('corrupt', `${name}: the file could not be read as a GeoTIFF`);
	}
	const t = band.transform;
	if (t[2] !== 0 || t[4] !== 0) {
		throw new LayerRejected('rotated', `${name}: the raster is rotated or sheared; warp it to a north-up grid before upload`);
	}
	if (!(t[1] > 0) || !(t[5] < 0)) {
		throw new LayerRejected('rotated', `${name}: the raster is flipped (rows must run north to south, columns west to east)`);
	}
	const stats = bandStats(band.data, band.nodata);
	if (stats.validCount === 0) {
		throw new LayerRejected('all-nodata', `${name}: every cell of band ${band.band} is nodata${band.nodata !== null ? ` (${band.nodata})` : ''}; there is nothing to use`);
	}
	let units: 'metre' | 'degree';
	try {
		units = isProjected(band.epsg) ? 'metre' : 'degree';
	} catch (e) {
		throw new LayerRejected('unknown-crs', `${name}: ${e instanceof Error ? e.message : 'unknown CRS'}`);
	}
	const metadata: LayerMetadata = {
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
		histogram: bandHistogram(band.data, band.nodata, stats.min, stats.max)
	};
	return { metadata, band };
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
