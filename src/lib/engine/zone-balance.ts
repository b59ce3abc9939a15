import { cellIndexAt } from './grid-frame';
import type { ZoneMap } from './types';

/** Zone index of the cell holding grid point (u, v); -1 outside the raster or in no zone. */
export function zoneOfPoint(zones: ZoneMap, width: number, height: number, u: number, v: number): number {
	const idx = cellIndexAt(width, height, u, v);
	return idx < 0 ? -1 : zones.cellZone[idx];
}

/**
 * Per zone: its mass share m_j and the point sensors are pulled towards when the zone is the
 * most under-served. That point is the zone's feasible cell nearest to the zone's mass centre
 * (the mass centre itself can fall outside a non-convex zone); a zone without mass uses the
 * centre of its cells; a zone without feasible cells keeps the mass centre (snapping then
 * takes over).
 */
export function zoneTargets(
	mass: Float64Array,
	feasible: Uint8Array,
	zones: ZoneMap,
	width: number,
	height: number
): { mass: Float64Array; u: Float64Array; v: Float64Array } {
	const k = zones.ids.length;
	const zm = new Float64Array(k);
	const su = new Float64Array(k);
	const sv = new Float64Array(k);
	const cnt = new Float64Array(k);
	const cu = new Float64Array(k);
	const cv = new Float64Array(k);
	for (let r = 0; r < height; r++) {
		for (let c = 0; c < width; c++) {
			const idx = r * width + c;
			const z = zones.cellZone[idx];
			if (z < 0) continue;
			zm[z] += mass[idx];
			su[z] += mass[idx] * (c + 0.5);
			sv[z] += mass[idx] * (r + 0.5);
			cnt[z] += 1;
			cu[z] += c + 0.5;
			cv[z] += r + 0.5;
		}
	}
	const tu = new Float64Array(k);
	const tv = new Float64Array(k);
	const best = new Float64Array(k).fill(Infinity);
	for (let z = 0; z < k; z++) {
		tu[z] = zm[z] > 0 ? su[z] / zm[z] : cnt[z] > 0 ? cu[z] / cnt[z] : 0;
		tv[z] = zm[z] > 0 ? sv[z] / zm[z] : cnt[z] > 0 ? cv[z] / cnt[z] : 0;
	}
	const ou = tu.slice();
	const ov = tv.slice();
	for (let r = 0; r < height; r++) {
		for (let c = 0; c < width; c++) {
			const idx = r * width + c;
			const z = zones.cellZone[idx];
			if (z < 0 || !feasible[idx]) continue;
			const d2 = (c + 0.5 - ou[z]) ** 2 + (r + 0.5 - ov[z]) ** 2;
			if (d2 < best[z]) {
				best[z] = d2;
				tu[z] = c + 0.5;
				tv[z] = r + 0.5;
			}
		}
	}
	return { mass: zm, u: tu, v: tv };
}

/**
 * σ_j = n_j/N − m_j for the current positions, σ̂_j = max(σ_j, 0) with |σ_j| < deadBand
 * counted as 0, and the neediest zone (lowest σ, first on a tie). pull = Σ σ̂_j.
 */
export function zoneBalanceState(
	zones: ZoneMap,
	zoneMass: Float64Array,
	pu: Float64Array,
	pv: Float64Array,
	width: number,
	height: number,
	deadBand: number
): { sigma: Float64Array; sigmaHat: Float64Array; neediest: number; pull: number } {
	const k = zones.ids.length;
	const n = pu.length;
	const counts = new Float64Array(k);
	for (let i = 0; i < n; i++) {
		const z = zoneOfPoint(zones, width, height, pu[i], pv[i]);
		if (z >= 0) counts[z]++;
	}
	const sigma = new Float64Array(k);
	const sigmaHat = new Float64Array(k);
	let neediest = 0;
	let pull = 0;
	for (let z = 0; z < k; z++) {
		sigma[z] = n > 0 ? counts[z] / n - zoneMass[z] : -zoneMass[z];
		const s = Math.abs(sigma[z]) < deadBand ? 0 : sigma[z];
		sigmaHat[z] = Math.max(s, 0);
		pull += sigmaHat[z];
		if (sigma[z] < sigma[neediest]) neediest = z;
	}
	// A neediest zone inside the dead-band needs nobody.
	if (!(Math.abs(sigma[neediest]) >= deadBand)) pull = 0;
	return { sigma, sigmaHat, neediest, pull };
}

/** Admission of zone crossings within one iteration; see crossingGate. */
export interface CrossingGate {
	/** True (and the counts updated) if a sensor may move from (u0, v0) to (u1, v1). */
	tryCross(u0: number, v0: number, u1: number, v1: number): boolean;
}

/**
 * Admits moves between zones one at a time: a move from zone a to zone b (a ≠ b) is accepted
 * only if afterwards σ_a ≥ −deadBand and σ_b ≤ deadBand, counting the moves already accepted
 * in this iteration. Moves within a zone, or from/to outside every zone, are always accepted.
 * This keeps a whole group from crossing a boundary in the same iteration (and oscillating).
 */
export function crossingGate(
	zones: ZoneMap,
	zoneMass: Float64Array,
	pu: Float64Array,
	pv: Float64Array,
	width: number,
	height: number,
	deadBand: number
): CrossingGate {
	const n = pu.length;
	const counts = new Float64Array(zones.ids.length);
	for (let i = 0; i < n; i++) {
		const z = zoneOfPoint(zones, width, height, pu[i], pv[i]);
		if (z >= 0) counts[z]++;
	}
	const eps = 1e-12;
	return {
		tryCross(u0, v0, u1, v1) {
			const a = zoneOfPoint(zones, width, height, u0, v0);
			const b = zoneOfPoint(zones, width, height, u1, v1);
			if (a === b) return true;
			if (a >= 0 && (counts[a] - 1) / n - zoneMass[a] < -deadBand - eps) return false;
			if (b >= 0 && (counts[b] + 1) / n - zoneMass[b] > deadBand + eps) return false;
			if (a >= 0) counts[a]--;
			if (b >= 0) counts[b]++;
			return true;
		}
	};
}
