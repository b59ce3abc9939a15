import { cellMoments, rowScratch } from './cell-moments';
import type { CellMoments } from './cell-moments';
import { weightedDistanceQuantile } from './distance-percentile';
import { nearestFeasibleCells } from './feasible-snap';
import { cellIndexAt, toU, toV, toX, toY } from './grid-frame';
import { rowPrefixSums } from './prefix-sums';
import { kMeansPlusPlusSeeds } from './seeding';
import type {
	HistoryEntry,
	Mobility,
	PlacedSensor,
	PlacementOptions,
	PlacementResult,
	SensorInput,
	WorkingGrid,
	ZoneMap,
	ZoneSummary
} from './types';
import { validatePlacementInput } from './validate';
import { crossingGate, zoneBalanceState, zoneOfPoint, zoneTargets } from './zone-balance';
import type { CrossingGate } from './zone-balance';

/**
 * Runs one placement: Lloyd's algorithm on the discrete importance map, in one of three forms.
 *
 * - lloyd: each movable sensor steps to the mass centroid of its whole Voronoi cell.
 * - range-limited: to the centroid of (Voronoi cell ∩ disk of its radius); no mass → stays.
 * - zone-balanced: (1 − σ̂_j)·(range-limited step) + σ̂_j·(step to the target of the most
 *   under-served zone), bounded by maxStep per iteration; sensors nearest to that zone move
 *   first, and a move into another zone is accepted only while it leaves the source zone's σ
 *   ≥ −deadBand and the destination's σ ≤ deadBand (σ re-counted after each accepted move), so
 *   sensors cross a few at a time instead of as a block; see zone-balance.ts.
 *
 * Defaults (documented in the engine's API): maxIterations 500; tolerance 0.01 × cellSize
 * (stop once no sensor moved more than that in an iteration); tolerance 0 always runs
 * maxIterations updates. maxStep: unbounded for lloyd and range-limited unless given; for
 * zone-balanced max(2 × cellSize, 0.25 × median radius).
 *
 * Constraints, applied to every target in this order:
 * 1. fixed sensors never move (they still own their Voronoi cell);
 * 2. the step is shortened to maxStep;
 * 3. a target outside the raster or in an infeasible cell snaps to the nearest feasible cell
 *    centre (nearest to the centre of the cell the target falls in, or of the raster cell
 *    nearest to it when outside);
 * 4. a target equal to another sensor's position is nudged (deterministic golden-angle
 *    offsets of 0.5, 1, 1.5 … cells) so coincident sensors separate;
 * 5. maxTravel: a target farther than maxTravel from the start is pulled back onto the circle
 *    around the start, then towards the start until it is in a feasible cell;
 * 6. minSpacing: moves are rejected, in sensor order (zone-balanced: nearest to the neediest
 *    zone first), when they would bring a sensor within minSpacing of another (the sensor
 *    keeps its position for that iteration).
 *
 * Mass that does not sum to 1 is normalised (a copy; inputs are never mutated).
 */
export function place(
	grid: WorkingGrid,
	zones: ZoneMap | null,
	sensors: SensorInput[],
	options: PlacementOptions
): PlacementResult {
	validatePlacementInput(grid, zones, sensors, options);
	const { width, height, cellSize } = grid;
	const cells = width * height;
	const maxIterations = options.maxIterations ?? 500;
	const tolerance = options.tolerance ?? 0.01 * cellSize;
	const tolU = tolerance / cellSize;

	let total = 0;
	for (let k = 0; k < cells; k++) total += grid.mass[k];
	const mass = new Float64Array(cells);
	if (total > 0) for (let k = 0; k < cells; k++) mass[k] = grid.mass[k] / total;

	// Sensors in grid units.
	const greenfield = sensors.length === 0;
	let ids: string[];
	let radii: number[];
	let mobility: Mobility[];
	let pu: Float64Array;
	let pv: Float64Array;
	if (greenfield) {
		const n = options.count as number;
		const seeds = kMeansPlusPlusSeeds(mass, grid.feasible, width, height, n, options.seed ?? 1);
		ids = Array.from({ length: n }, (_, i) => `S${i + 1}`);
		radii = new Array(n).fill(options.radius as number);
		mobility = new Array(n).fill('relocatable');
		pu = seeds.u;
		pv = seeds.v;
	} else {
		ids = sensors.map((s) => s.id);
		radii = sensors.map((s) => s.radius);
		mobility = sensors.map((s) => s.mobility);
		pu = Float64Array.from(sensors, (s) => toU(grid, s.x));
		pv = Float64Array.from(sensors, (s) => toV(grid, s.y));
	}
	const n = ids.length;
	const startU = pu.slice();
	const startV = pv.slice();
	const rho = Float64Array.from(radii, (r) => r / cellSize);
	const movable = mobility.map((m) => m !== 'fixed');
	const maxTravelU = greenfield ? sensors.map(() => Infinity) : sensors.map((s) => (s.maxTravel ?? Infinity) / cellSize);

	const history: HistoryEntry[] = [];
	const record = (entry: HistoryEntry) => {
		history.push(entry);
		options.onIteration?.(entry);
	};

	if (!(total > 0)) {
		// Nothing to serve: no step has a direction. Sensors stay where they are.
		record({ iteration: 0, cost: 0, coverage: 0 });
		return finish(grid, zones, mass, ids, radii, mobility, pu, pv, startU, startV, sensors, greenfield, options, 0, true, history, 0, 0);
	}

	const prefix = rowPrefixSums(mass, width, height);
	const scratch = rowScratch(height);
	let nearest: Int32Array | null = null;
	const nearestFeasible = () => (nearest ??= nearestFeasibleCells(grid.feasible, width, height));

	let maxStepU = options.maxStep !== undefined ? options.maxStep / cellSize : Infinity;
	if (options.maxStep === undefined && options.strategy === 'zone-balanced') {
		const sorted = [...rho].sort((a, b) => a - b);
		maxStepU = Math.max(2, 0.25 * sorted[Math.floor(sorted.length / 2)]);
	}
	const zoneT = options.strategy === 'zone-balanced' && zones ? zoneTargets(mass, grid.feasible, zones, width, height) : null;

	let iterations = 0;
	let lastMaxMove = Infinity;
	let converged = false;
	let moments: CellMoments;
	for (;;) {
		moments = cellMoments(prefix, pu, pv, rho, scratch);
		record({ iteration: iterations, cost: sumOf(moments.cost) * cellSize * cellSize, coverage: Math.min(1, sumOf(moments.diskMass)) });
		if (iterations > 0 && (tolerance > 0 ? lastMaxMove <= tolU : false)) {
			converged = true;
			break;
		}
		if (iterations >= maxIterations) break;

		// Targets.
		const tu = pu.slice();
		const tv = pv.slice();
		if (options.strategy === 'lloyd') {
			for (let i = 0; i < n; i++) {
				if (movable[i] && moments.mass[i] > 0) {
					tu[i] = moments.su[i] / moments.mass[i];
					tv[i] = moments.sv[i] / moments.mass[i];
				}
			}
		} else {
			for (let i = 0; i < n; i++) {
				if (movable[i] && moments.diskMass[i] > 0) {
					tu[i] = moments.diskSu[i] / moments.diskMass[i];
					tv[i] = moments.diskSv[i] / moments.diskMass[i];
				}
			}
		}
		// Zone-balanced: blend the local step with the pull towards the neediest zone.
		const localU = tu.slice();
		const localV = tv.slice();
		let order: number[] = Array.from({ length: n }, (_, i) => i);
		let gate: CrossingGate | null = null;
		if (options.strategy === 'zone-balanced' && zones && zoneT) {
			const deadBand = options.deadBand ?? 1 / (2 * n);
			const state = zoneBalanceState(zones, zoneT.mass, pu, pv, width, height, deadBand);
			const k = state.neediest;
			if (state.pull > 0) {
				for (let i = 0; i < n; i++) {
					const j = zoneOfPoint(zones, width, height, pu[i], pv[i]);
					if (!movable[i] || j < 0) continue;
					const s = state.sigmaHat[j];
					if (s <= 0 || j === k) continue;
					tu[i] = pu[i] + (1 - s) * (tu[i] - pu[i]) + s * (zoneT.u[k] - pu[i]);
					tv[i] = pv[i] + (1 - s) * (tv[i] - pv[i]) + s * (zoneT.v[k] - pv[i]);
				}
				// Sensors nearest to the neediest zone decide first whether they may cross.
				const d2 = Float64Array.from(pu, (u, i) => (u - zoneT.u[k]) ** 2 + (pv[i] - zoneT.v[k]) ** 2);
				order = order.sort((a, b) => d2[a] - d2[b] || a - b);
			}
			gate = crossingGate(zones, zoneT.mass, pu, pv, width, height, deadBand);
		}

		// Constraints, sensor by sensor.
		const nu = pu.slice();
		const nv = pv.slice();
		const occupied = new Map<string, number>();
		for (let i = 0; i < n; i++) bump(occupied, key(pu[i], pv[i]), 1);
		const spacingU = options.minSpacing && options.minSpacing > 0 ? options.minSpacing / cellSize : 0;
		const constrain = (i: number, targetU: number, targetV: number): [number, number] => {
			let x = targetU;
			let y = targetV;
			const du = x - pu[i];
			const dv = y - pv[i];
			const step = Math.hypot(du, dv);
			if (step > maxStepU) {
				x = pu[i] + (du * maxStepU) / step;
				y = pv[i] + (dv * maxStepU) / step;
			}
			[x, y] = snapToFeasible(grid, nearestFeasible, x, y);
			[x, y] = separate(grid, nearestFeasible, occupied, x, y, i);
			[x, y] = clampTravel(grid, startU[i], startV[i], maxTravelU[i], x, y, pu[i], pv[i]);
			if (spacingU > 0 && tooClose(nu, nv, i, x, y, spacingU)) return [pu[i], pv[i]];
			return [x, y];
		};
		let maxMove = 0;
		for (const i of order) {
			if (!movable[i]) continue;
			bump(occupied, key(pu[i], pv[i]), -1);
			let [x, y] = constrain(i, tu[i], tv[i]);
			if (gate && !gate.tryCross(pu[i], pv[i], x, y)) {
				// Crossing refused (it would over-fill or under-fill a zone): take the local step
				// alone, and stay put if that crosses too.
				[x, y] = constrain(i, localU[i], localV[i]);
				if (!gate.tryCross(pu[i], pv[i], x, y)) [x, y] = [pu[i], pv[i]];
			}
			bump(occupied, key(x, y), 1);
			nu[i] = x;
			nv[i] = y;
			maxMove = Math.max(maxMove, Math.hypot(x - pu[i], y - pv[i]));
		}
		pu = nu;
		pv = nv;
		lastMaxMove = maxMove;
		iterations++;
	}
	if (tolerance === 0 && iterations >= maxIterations) converged = lastMaxMove === 0;
	const cost = history[history.length - 1].cost;
	const coverage = history[history.length - 1].coverage;
	return finish(grid, zones, mass, ids, radii, mobility, pu, pv, startU, startV, sensors, greenfield, options, iterations, converged, history, cost, coverage);
}

function sumOf(a: Float64Array): number {
	let s = 0;
	for (let k = 0; k < a.length; k++) s += a[k];
	return s;
}

function key(u: number, v: number): string {
	return `${u},${v}`;
}

function bump(counts: Map<string, number>, k: string, by: number): void {
	const c = (counts.get(k) ?? 0) + by;
	if (c > 0) counts.set(k, c);
	else counts.delete(k);
}

function snapToFeasible(grid: WorkingGrid, nearestFeasible: () => Int32Array, u: number, v: number): [number, number] {
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
function separate(
	grid: WorkingGrid,
	nearestFeasible: () => Int32Array,
	occupied: Map<string, number>,
	u: number,
	v: number,
	i: number
): [number, number] {
	if (!occupied.has(key(u, v))) return [u, v];
	for (let t = 1; t <= 64; t++) {
		const a = (i + t) * GOLDEN_ANGLE;
		const r = 0.5 * Math.ceil(t / 8);
		const [x, y] = snapToFeasible(grid, nearestFeasible, u + r * Math.cos(a), v + r * Math.sin(a));
		if (!occupied.has(key(x, y))) return [x, y];
	}
	return [u, v];
}

function clampTravel(
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

function tooClose(pu: Float64Array, pv: Float64Array, i: number, u: number, v: number, spacing: number): boolean {
	const s2 = spacing * spacing;
	for (let j = 0; j < pu.length; j++) {
		if (j === i) continue;
		const du = pu[j] - u;
		const dv = pv[j] - v;
		if (du * du + dv * dv < s2) return true;
	}
	return false;
}

function finish(
	grid: WorkingGrid,
	zones: ZoneMap | null,
	mass: Float64Array,
	ids: string[],
	radii: number[],
	mobility: Mobility[],
	pu: Float64Array,
	pv: Float64Array,
	startU: Float64Array,
	startV: Float64Array,
	inputs: SensorInput[],
	greenfield: boolean,
	options: PlacementOptions,
	iterations: number,
	converged: boolean,
	history: HistoryEntry[],
	cost: number,
	coverage: number
): PlacementResult {
	const { width, height, cellSize } = grid;
	const n = ids.length;
	const placed: PlacedSensor[] = [];
	for (let i = 0; i < n; i++) {
		const unchanged = pu[i] === startU[i] && pv[i] === startV[i];
		const x = unchanged && !greenfield ? inputs[i].x : toX(grid, pu[i]);
		const y = unchanged && !greenfield ? inputs[i].y : toY(grid, pv[i]);
		const z = zones ? zoneOfPoint(zones, width, height, pu[i], pv[i]) : -1;
		placed.push({
			id: ids[i],
			x,
			y,
			radius: radii[i],
			mobility: mobility[i],
			zone: zones && z >= 0 ? zones.ids[z] : null,
			movedM: greenfield ? 0 : Math.hypot(pu[i] - startU[i], pv[i] - startV[i]) * cellSize
		});
	}
	const zoneSummaries: ZoneSummary[] = [];
	if (zones) {
		const zm = new Float64Array(zones.ids.length);
		for (let k = 0; k < mass.length; k++) if (zones.cellZone[k] >= 0) zm[zones.cellZone[k]] += mass[k];
		const counts = new Int32Array(zones.ids.length);
		for (let i = 0; i < n; i++) {
			const z = zoneOfPoint(zones, width, height, pu[i], pv[i]);
			if (z >= 0) counts[z]++;
		}
		zones.ids.forEach((id, j) => zoneSummaries.push({ id, mass: zm[j], sensors: counts[j], sigma: n > 0 ? counts[j] / n - zm[j] : -zm[j] }));
	}
	const p95 = weightedDistanceQuantile(mass, width, height, pu, pv, 0.95) * cellSize;
	return {
		crs: grid.crs,
		strategy: options.strategy,
		iterations,
		converged,
		cost,
		coverage,
		p95DistanceM: p95,
		sensors: placed,
		zones: zoneSummaries,
		history
	};
}
