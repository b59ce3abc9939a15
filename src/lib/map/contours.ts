/**
 * Contour lines of a map raster (d3-contour's marching squares), in map CRS coordinates.
 */
import { contours as d3Contours } from 'd3-contour';
import type { MapContour } from '../api/client';
import type { Position } from '../geo/geometry';
import { fillGaps, type MapRaster } from './raster';

/** `count` levels evenly inside (min, max), excluding both ends; none for a constant surface. */
export function contourLevels(min: number, max: number, count = 4): number[] {
	if (!Number.isInteger(count) || count < 1) throw new RangeError(`contour count must be a positive integer, not ${count}`);
	if (!(max > min)) return [];
	return Array.from({ length: count }, (_, k) => Number((min + ((max - min) * (k + 1)) / (count + 1)).toPrecision(3)));
}

/**
 * Contour lines of a map raster at the given levels, in map CRS coordinates (d3-contour: marching
 * squares with linear interpolation). d3-contour puts value i at grid coordinate i + 0.5, the cell
 * centre, so grid (gx, gy) maps to (x0 + gx·dx, y0 − gy·dy). Only true contour is kept: d3's
 * polygons are closed along the grid's edge (outside the cell centres, where nothing is known)
 * and those pieces are dropped, as are pieces through cells without a value (filled only to
 * contour across them). Levels with no line are left out.
 */
export function contourLines(r: MapRaster, levels: readonly number[]): MapContour[] {
	if (levels.length === 0) return [];
	const filled = fillGaps(r);
	if (!filled) return [];
	const { width: w, height: h } = r;
	const onEdge = ([gx, gy]: number[]) => gx <= 0 || gx >= w || gy <= 0 || gy >= h;
	const inHole = (a: number[], b: number[]) => {
		const i = Math.min(w - 1, Math.max(0, Math.floor((a[0] + b[0]) / 2)));
		const j = Math.min(h - 1, Math.max(0, Math.floor((a[1] + b[1]) / 2)));
		return !Number.isFinite(r.values[j * w + i]);
	};
	const toMap = ([gx, gy]: number[]): Position => [r.x0 + gx * r.dx, r.y0 - gy * r.dy];
	const shapes = d3Contours().size([w, h]).thresholds(levels as number[])(Array.from(filled));
	const out: MapContour[] = [];
	for (const s of shapes) {
		const lines: Position[][] = [];
		for (const poly of s.coordinates) {
			for (const ring of poly) {
				const runs: number[][][] = [];
				let run: number[][] = [];
				const last = ring.length - 2;
				let firstKept = false;
				let lastKept = false;
				for (let k = 0; k <= last; k++) {
					const a = ring[k];
					const b = ring[k + 1];
					if (onEdge(a) || onEdge(b) || inHole(a, b)) {
						if (run.length > 1) runs.push(run);
						run = [];
						continue;
					}
					if (k === 0) firstKept = true;
					if (k === last) lastKept = true;
					if (run.length === 0) run.push(a);
					run.push(b);
				}
				if (run.length > 1) runs.push(run);
				// A ring cut somewhere whose first and last pieces are kept: they join where it closes.
				if (runs.length > 1 && firstKept && lastKept) {
					const tail = runs.pop() as number[][];
					runs[0] = [...tail, ...runs[0].slice(1)];
				}
				for (const line of runs) lines.push(line.map(toMap));
			}
		}
		if (lines.length > 0) out.push({ level: s.value, lines });
	}
	return out;
}
