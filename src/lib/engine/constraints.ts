import { cellIndexAt } from './grid-frame';
import type { WorkingGrid } from './types';
import { COINCIDENT_DISTANCE } from './voronoi-cells';

/*
 * The constraints place() applies to every target (grid units; see grid-frame.ts):
 * feasibility snapping, separation of coincident sensors, and the travel limit.
 */

/**
 * Multiset of sensor positions, bucketed by the unit cell they fall in. Lookups treat
 * positions within COINCIDENT_DISTANCE as the same (the Voronoi diagram does too).
 */
export class Occupancy {
	private buckets = new Map<number, number[]>();

	private bucket(u: number, v: number): number {
		return Math.floor(u) * 1_000_003 + Math.floor(v);
	}

	add(u: number, v: number): void {
		const k = this.bucket(u, v);
		const list = this.buckets.get(k);
		if (list) list.push(u, v);
		else this.buckets.set(k, [u, v]);
	}

	remove(u: number, v: number): void {
		const list = this.buckets.get(this.bucket(u, v));
		if (!list) return;
		for (let j = 0; j < list.length; j += 2) {
			if (list[j] === u && list[j + 1] === v) {
				list.splice(j, 2);
				return;
			}
		}
	}

	/** True if a stored position lies within COINCIDENT_DISTANCE of (u, v). */
	has(u: number, v: number): boolean {
		const d2 = COINCIDENT_DISTANCE * COINCIDENT_DISTANCE;
		const bu = Math.floor(u);
		const bv = Math.floor(v);
		for (let du = -1; du <= 1; du++) {
			for (let dv = -1; dv <= 1; dv++) {
				const list = this.buckets.get((bu + du) * 1_000_003 + (bv + dv));
				if (!list) continue;
				for (let j = 0; j < list.length; j += 2) {
					const eu = list[j] - u;
					const ev = list[j + 1] - v;
					if (eu * eu + ev * ev <= d2) return true;
				}
			}
		}
		return false;
	}
}

/**
 * A target outside the raster or in an infeasible cell moves to the nearest feasible cell
 * centre (nearest to the centre of the cell the target is in, or of the raster cell nearest to
 * it when outside). nearestFeasible is computed lazily, once per grid.
 */
export function snapToFeasible(grid: WorkingGrid, nearestFeasible: () => Int32Array, u: number, v: number): [number, number] {
	const { width, height } = grid;
	const idx = cellIndexAt(width, height, u, v);
	if (idx >= 0 && grid.feasible[idx]) return [u, v];
	const cu = Math.min(width - 1, Math.max(0, Math.floor(u)));
	const cv = Math.min(height - 1, Math.max(0, Math.floor(v)));
	const near = nearestFeasible()[cv * width + cu];
	if (near < 0) return [u, v];
	return [(near % width) + 0.5, Math.floor(near / width) + 0.5];
}

const GOLDEN_ANGLE = Math.PI * (3 - Math.sqrt(5));

/** Moves (u, v) off any occupied position by growing golden-angle offsets; deterministic. */
export function separate(
	grid: WorkingGrid,
	nearestFeasible: () => Int32Array,
	occupied: Occupancy,
	u: number,
	v: number,
	i: number
): [number, number] {
	if (!occupied.has(u, v)) return [u, v];
	for (let t = 1; t <= 64; t++) {
		const a = (i + t) * GOLDEN_ANGLE;
		const r = 0.5 * Math.ceil(t / 8);
		const [x, y] = snapToFeasible(grid, nearestFeasible, u + r * Math.cos(a), v + r * Math.sin(a));
		if (!occupied.has(x, y)) return [x, y];
	}
	return [u, v];
}

export function clampTravel(
	grid: WorkingGrid,
	su: number,
	sv: number,
	limit: number,
	u: number,
	v: number,
	fallbackU: number,
	fallbackV: number
): [number, number] {
	const d = Math.hypot(u - su, v - sv);
	if (!(d > limit)) return [u, v];
	const f = limit / d;
	let x = su + (u - su) * f;
	let y = sv + (v - sv) * f;
	// Walk back towards the start in half-cell steps until the point stands in a feasible cell.
	const steps = Math.ceil(2 * limit) + 1;
	for (let s = 0; s <= steps; s++) {
		const g = 1 - s / steps;
		x = su + (u - su) * f * g;
		y = sv + (v - sv) * f * g;
		const idx = cellIndexAt(grid.width, grid.height, x, y);
		if (idx >= 0 && grid.feasible[idx]) return [x, y];
	}
	return [fallbackU, fallbackV];
}

