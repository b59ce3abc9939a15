import { cellCostAndCoverage, cellMoments, rowScratch } from './cell-moments';
import { centroidTargets } from './centroid-step';
import { clampTravel, Occupancy, separate, snapToFeasible } from './constraints';
import { weightedDistanceQuantile } from './distance-percentile';
import { nearestFeasibleCells } from './feasible-snap';
import { toU, toV, toX, toY } from './grid-frame';
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
import { SpacingIndex } from './spacing-index';
import { validatePlacementInput } from './validate';
import { crossingGate, zoneBalancedTargets, zoneOfPoint, zoneTargets } from './zone-balance';
import type { CrossingGate } from './zone-balance';

/**
 * Runs one placement: Lloyd's algorithm on the discrete importance map, in one of three forms.
 *
 * - lloyd: each movable sensor steps to the mass centroid of its whole Voronoi cell.
 * - range-limited: to the centroid of (Voronoi cell ∩ disk of its radius); no mass → stays.
 * - zone-balanced: (1 − σ̂_j)·(range-limited step) + σ̂_j·(step to the target of the most
 *   under-served zone), bounded by maxStep per iteration; sensors nearest to that zone move
 *   first, and a move into another zone is accepted only if it does not increase Σ|σ_j|
 *   (σ re-counted after each accepted move), so sensors cross a few at a time instead of as a
 *   block, and may pass through balanced zones; see zone-balance.ts.
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
 * 4. a target within 1e-5 cells of another sensor's position (coincident for the Voronoi
 *    diagram) is nudged by deterministic golden-angle offsets of 0.5, 1, 1.5 … cells, so
 *    coincident sensors separate;
 * 5. maxTravel: a target farther than maxTravel from the start is pulled back onto the circle
 *    around the start, then towards the start until it is in a feasible cell (a sensor that
 *    starts in an infeasible cell with none within maxTravel stays where it is);
 * 6. minSpacing: moves are rejected, in sensor order (zone-balanced: nearest to the neediest
 *    zone first), when they would bring a sensor within minSpacing of another (the sensor
 *    keeps its position for that iteration);
 * 7. zone-balanced: the crossing admission above; a refused move falls back to the local
 *    step, and to staying put if that crosses too.
 *
 * Mass that does not sum to 1 is normalised (a copy; inputs are never mutated, nor is the mass).
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
	// Read only from here on, so mass that already sums to 1 is used as it is.
	let mass = grid.mass;
	if (total !== 1) {
		mass = new Float64Array(cells);
		if (total > 0) for (let k = 0; k < cells; k++) mass[k] = grid.mass[k] / total;
	}

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
		options.onIteration?.({ ...entry });
	};

	if (!(total > 0)) {
		// Nothing to serve: no step has a direction. Sensors stay where they are.
		record({ iteration: 0, cost: 0, coverage: 0 });
		return finish({ grid, zones, mass, ids, radii, mobility, pu, pv, startU, startV, inputs: sensors, greenfield, options }, 0, true, history);
	}

	if (maxIterations === 0) {
		// Only the start is described: one evaluation, summed directly, without the prefix sums
		// (24 bytes a cell) that make each of many iterations cheap.
		const start = cellCostAndCoverage(mass, width, height, pu, pv, rho);
		record({ iteration: 0, cost: sumOf(start.cost) * cellSize * cellSize, coverage: Math.min(1, sumOf(start.diskMass)) });
		return finish({ grid, zones, mass, ids, radii, mobility, pu, pv, startU, startV, inputs: sensors, greenfield, options }, 0, false, history);
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
	for (;;) {
		const moments = cellMoments(prefix, pu, pv, rho, scratch);
		record({ iteration: iterations, cost: sumOf(moments.cost) * cellSize * cellSize, coverage: Math.min(1, sumOf(moments.diskMass)) });
		if (iterations > 0 && (tolerance > 0 ? lastMaxMove <= tolU : false)) {
			converged = true;
			break;
		}
		if (iterations >= maxIterations) break;

		// Targets: the local centroid step, blended with the zone pull for zone-balanced.
		const local = centroidTargets(moments, movable, pu, pv, options.strategy !== 'lloyd');
		let tu = local.u;
		let tv = local.v;
		let order: number[] = Array.from({ length: n }, (_, i) => i);
		let gate: CrossingGate | null = null;
		if (options.strategy === 'zone-balanced' && zones && zoneT) {
			const deadBand = options.deadBand ?? 1 / (2 * n);
			const pulled = zoneBalancedTargets(zones, zoneT, movable, pu, pv, local.u, local.v, width, height, deadBand);
			tu = pulled.u;
			tv = pulled.v;
			order = pulled.order;
			gate = crossingGate(zones, zoneT.mass, pu, pv, width, height);
		}

		// Constraints, sensor by sensor.
		const nu = pu.slice();
		const nv = pv.slice();
		const occupied = new Occupancy();
		for (let i = 0; i < n; i++) occupied.add(pu[i], pv[i]);
		const spacingU = options.minSpacing && options.minSpacing > 0 ? options.minSpacing / cellSize : 0;
		const spacing = spacingU > 0 ? new SpacingIndex(nu, nv, spacingU) : null;
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
			if (spacing && spacing.anyWithin(i, x, y)) return [pu[i], pv[i]];
			return [x, y];
		};
		let maxMove = 0;
		for (const i of order) {
			if (!movable[i]) continue;
			occupied.remove(pu[i], pv[i]);
			let [x, y] = constrain(i, tu[i], tv[i]);
			if (gate && !gate.tryCross(pu[i], pv[i], x, y)) {
				// Crossing refused (it would add to the zone imbalance): take the local step
				// alone, and stay put if that crosses too.
				[x, y] = constrain(i, local.u[i], local.v[i]);
				if (!gate.tryCross(pu[i], pv[i], x, y)) [x, y] = [pu[i], pv[i]];
			}
			occupied.add(x, y);
			nu[i] = x;
			nv[i] = y;
			spacing?.move(i, pu[i], pv[i]);
			maxMove = Math.max(maxMove, Math.hypot(x - pu[i], y - pv[i]));
		}
		pu = nu;
		pv = nv;
		lastMaxMove = maxMove;
		iterations++;
	}
	if (tolerance === 0 && iterations >= maxIterations) converged = lastMaxMove === 0;
	return finish({ grid, zones, mass, ids, radii, mobility, pu, pv, startU, startV, inputs: sensors, greenfield, options }, iterations, converged, history);
}

function sumOf(a: Float64Array): number {
	let s = 0;
	for (let k = 0; k < a.length; k++) s += a[k];
	return s;
}

/** Everything finish() needs to describe the final state. */
interface FinalState {
	grid: WorkingGrid;
	zones: ZoneMap | null;
	/** Normalised mass. */
	mass: Float64Array;
	ids: string[];
	radii: number[];
	mobility: Mobility[];
	/** Final and start positions, grid units. */
	pu: Float64Array;
	pv: Float64Array;
	startU: Float64Array;
	startV: Float64Array;
	inputs: SensorInput[];
	greenfield: boolean;
	options: PlacementOptions;
}

/** Builds the result: sensors in metres, zone summaries, and the final metrics. */
function finish(state: FinalState, iterations: number, converged: boolean, history: HistoryEntry[]): PlacementResult {
	const { grid, zones, mass, ids, radii, mobility, pu, pv, startU, startV, inputs, greenfield, options } = state;
	const { width, height, cellSize } = grid;
	const n = ids.length;
	const { cost, coverage } = history[history.length - 1];
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
