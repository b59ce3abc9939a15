import { EngineInputError } from './errors';
import { MOBILITIES, STRATEGIES } from './types';
import type { PlacementOptions, SensorInput, WorkingGrid, ZoneMap } from './types';

const isFiniteNumber = (x: unknown): x is number => typeof x === 'number' && Number.isFinite(x);

/** Checks every input of place() and throws EngineInputError naming the first bad field. */
export function validatePlacementInput(
	grid: WorkingGrid,
	zones: ZoneMap | null,
	sensors: SensorInput[],
	options: PlacementOptions
): void {
	validateGrid(grid);
	const cells = grid.width * grid.height;
	if (zones !== null) {
		if (!zones || !Array.isArray(zones.ids) || !(zones.cellZone instanceof Int32Array)) {
			throw new EngineInputError('zones', 'must have ids (string[]) and cellZone (Int32Array)');
		}
		if (zones.cellZone.length !== cells) {
			throw new EngineInputError('zones.cellZone', `has ${zones.cellZone.length} values, the grid has ${cells} cells`);
		}
		for (let k = 0; k < cells; k++) {
			const z = zones.cellZone[k];
			if (z < -1 || z >= zones.ids.length) {
				throw new EngineInputError('zones.cellZone', `cell ${k} names zone ${z}, but there are ${zones.ids.length} zones`);
			}
		}
	}
	if (!options || !STRATEGIES.includes(options.strategy)) {
		throw new EngineInputError('options.strategy', `unknown strategy "${String(options?.strategy)}"; use one of ${STRATEGIES.join(', ')}`);
	}
	if (options.strategy === 'zone-balanced' && (zones === null || zones.ids.length === 0)) {
		throw new EngineInputError('zones', 'the zone-balanced strategy needs a zone set');
	}
	const intOpt = (name: 'maxIterations' | 'count', min: number) => {
		const v = options[name];
		if (v !== undefined && !(Number.isInteger(v) && v >= min)) {
			throw new EngineInputError(`options.${name}`, `must be an integer >= ${min}, got ${String(v)}`);
		}
	};
	intOpt('maxIterations', 0);
	intOpt('count', 1);
	const nonNeg = (name: 'tolerance' | 'minSpacing' | 'deadBand') => {
		const v = options[name];
		if (v !== undefined && !(isFiniteNumber(v) && v >= 0)) {
			throw new EngineInputError(`options.${name}`, `must be a number >= 0, got ${String(v)}`);
		}
	};
	nonNeg('tolerance');
	nonNeg('minSpacing');
	nonNeg('deadBand');
	const positive = (name: 'maxStep' | 'radius') => {
		const v = options[name];
		if (v !== undefined && !(isFiniteNumber(v) && v > 0)) {
			throw new EngineInputError(`options.${name}`, `must be a number > 0, got ${String(v)}`);
		}
	};
	positive('maxStep');
	positive('radius');
	if (options.seed !== undefined && !isFiniteNumber(options.seed)) {
		throw new EngineInputError('options.seed', `must be a finite number, got ${String(options.seed)}`);
	}
	if (!Array.isArray(sensors)) throw new EngineInputError('sensors', 'must be an array');
	if (sensors.length === 0) {
		if (options.count === undefined) {
			throw new EngineInputError('sensors', 'no sensors given and no options.count: nothing to place');
		}
		if (options.radius === undefined) {
			throw new EngineInputError('options.radius', 'placing new sensors where none stand yet needs a sensing radius');
		}
		let feasibleCells = 0;
		for (let k = 0; k < cells; k++) feasibleCells += grid.feasible[k] ? 1 : 0;
		if (feasibleCells < options.count) {
			throw new EngineInputError('options.count', `${options.count} sensors asked for, but only ${feasibleCells} cells may hold a sensor`);
		}
	}
	const seen = new Set<string>();
	sensors.forEach((s, i) => {
		const f = `sensors[${i}]`;
		if (!s || typeof s.id !== 'string' || s.id === '') throw new EngineInputError(`${f}.id`, 'must be a non-empty string');
		if (seen.has(s.id)) throw new EngineInputError(`${f}.id`, `"${s.id}" is used by two sensors`);
		seen.add(s.id);
		if (!isFiniteNumber(s.x) || !isFiniteNumber(s.y)) throw new EngineInputError(`${f}`, `sensor "${s.id}" has no finite x/y`);
		if (!(isFiniteNumber(s.radius) && s.radius > 0)) throw new EngineInputError(`${f}.radius`, `sensor "${s.id}" needs a radius > 0 m`);
		if (!MOBILITIES.includes(s.mobility)) throw new EngineInputError(`${f}.mobility`, `sensor "${s.id}" has unknown mobility "${String(s.mobility)}"`);
		if (s.maxTravel !== undefined && !(isFiniteNumber(s.maxTravel) && s.maxTravel >= 0)) {
			throw new EngineInputError(`${f}.maxTravel`, `sensor "${s.id}" needs maxTravel >= 0 m`);
		}
	});
	let hasFeasible = false;
	for (let k = 0; k < cells && !hasFeasible; k++) hasFeasible = grid.feasible[k] !== 0;
	if (!hasFeasible) throw new EngineInputError('grid.feasible', 'no cell may hold a sensor');
}

function validateGrid(grid: WorkingGrid): void {
	if (!grid) throw new EngineInputError('grid', 'is missing');
	if (!(Number.isInteger(grid.width) && grid.width > 0 && Number.isInteger(grid.height) && grid.height > 0)) {
		throw new EngineInputError('grid', `width and height must be positive integers, got ${grid.width}x${grid.height}`);
	}
	if (!(isFiniteNumber(grid.cellSize) && grid.cellSize > 0)) throw new EngineInputError('grid.cellSize', 'must be > 0 m');
	if (!isFiniteNumber(grid.x0) || !isFiniteNumber(grid.y0)) throw new EngineInputError('grid', 'x0 and y0 must be finite');
	const cells = grid.width * grid.height;
	if (!(grid.mass instanceof Float64Array) || grid.mass.length !== cells) {
		throw new EngineInputError('grid.mass', `must be a Float64Array of ${cells} values (width x height)`);
	}
	if (!(grid.feasible instanceof Uint8Array) || grid.feasible.length !== cells) {
		throw new EngineInputError('grid.feasible', `must be a Uint8Array of ${cells} values (width x height)`);
	}
	for (let k = 0; k < cells; k++) {
		const m = grid.mass[k];
		if (!(m >= 0) || m === Infinity) {
			throw new EngineInputError('grid.mass', `cell ${k} (row ${Math.floor(k / grid.width)}, column ${k % grid.width}) holds ${m}; mass must be finite and >= 0`);
		}
	}
}
