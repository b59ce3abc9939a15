/**
 * The importance map's image and contours in one map CRS, drawn from a recipe version's surface:
 * the surface resampled to at most IMAGE_SIZE cells a side in `epsg`, coloured with the moorland
 * ramp over its own value range, and contour lines cut from a grid coarsened to CONTOUR_SIZE.
 * Pure CPU work with no I/O: the map-importance job runs it in a pool thread
 * (jobs/threads/tasks.ts), never a request. Any CRS the app has a definition for works (the
 * network's working CRS, a web map's EPSG:3857, …).
 */
import { CrsError } from '../../geo/crs';
import type { Bounds } from '../../geo/geometry';
import { contourLevels, contourLines } from '../../map/contours';
import { coarsen, MapRasterError, rasterBounds, resampleToMap, valueRange, type SurfaceLike } from '../../map/raster';
import type { MapContour } from '../../api/client';
import { rampPng } from '../layers/preview';

/** Longest side of the importance image, in cells. */
export const IMAGE_SIZE = 512;
/** Longest side of the grid the contours are cut from, in cells. */
const CONTOUR_SIZE = 160;
const CONTOUR_COUNT = 4;

/** What the map shows of an importance surface in one CRS: bounds, value range, contours. */
export interface ImportanceView {
	bounds: Bounds;
	min: number;
	max: number;
	contours: MapContour[];
}

/** The surface cannot be drawn in that CRS (outside its area of use, no definition, …). */
export class ImportanceImageError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'ImportanceImageError';
	}
}

/** The view and PNG of a surface in `epsg`; null when the surface holds no value there. */
export function renderImportance(surface: SurfaceLike, epsg: number): { view: ImportanceView; png: Buffer } | null {
	let raster;
	try {
		raster = resampleToMap(surface, epsg, IMAGE_SIZE);
	} catch (e) {
		if (e instanceof MapRasterError || e instanceof CrsError) throw new ImportanceImageError(`The importance surface cannot be drawn on the map: ${e.message}.`);
		throw e;
	}
	const range = valueRange(raster.values);
	if (!range) return null;
	return {
		view: { bounds: rasterBounds(raster), min: range.min, max: range.max, contours: contourLines(coarsen(raster, CONTOUR_SIZE), contourLevels(range.min, range.max, CONTOUR_COUNT)) },
		png: rampPng(raster.values, raster.width, raster.height, range.min, range.max, 'moorland')
	};
}
