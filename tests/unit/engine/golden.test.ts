import { existsSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { EngineInputError, place } from '../../../src/lib/engine';
import type { PlacementOptions, PlacementResult, SensorInput, WorkingGrid, ZoneMap } from '../../../src/lib/engine';
import { bruteForceMoments } from '../../../src/bench/support/brute-force';

// Golden fixtures for the degenerate inputs: tests/fixtures/engine/in/NAME.json → out/NAME.json.
// The outputs were produced by this engine and checked by hand against the properties asserted
// below (each case also has its own checks that do not depend on the stored output).
// Regenerate with UPDATE_GOLDEN=1 after a deliberate change, and review the diff.
const root = join(__dirname, '../../fixtures/engine');
const names = readdirSync(join(root, 'in'))
	.filter((f) => f.endsWith('.json'))
	.map((f) => f.replace(/\.json$/, ''))
	.sort();

interface FixtureInput {
	description: string;
	grid: Omit<WorkingGrid, 'mass' | 'feasible'> & { mass: number[]; feasible?: number[] };
	zones: { ids: string[]; cellZone: number[] } | null;
	sensors: SensorInput[];
	options: PlacementOptions;
}

function load(name: string): { input: FixtureInput; grid: WorkingGrid; zones: ZoneMap | null } {
	const input = JSON.parse(readFileSync(join(root, 'in', `${name}.json`), 'utf8')) as FixtureInput;
	const cells = input.grid.width * input.grid.height;
	const grid: WorkingGrid = {
		...input.grid,
		mass: Float64Array.from(input.grid.mass),
		feasible: input.grid.feasible ? Uint8Array.from(input.grid.feasible) : new Uint8Array(cells).fill(1)
	};
	const zones = input.zones ? { ids: input.zones.ids, cellZone: Int32Array.from(input.zones.cellZone) } : null;
	return { input, grid, zones };
}

function run(name: string): PlacementResult | { error: { name: string; message: string } } {
	const { input, grid, zones } = load(name);
	try {
		return place(grid, zones, input.sensors, input.options);
	} catch (e) {
		if (e instanceof EngineInputError) return { error: { name: e.name, message: e.message } };
		throw e;
	}
}

/** Deep comparison; numbers within 1e-9 relative or 1e-6 absolute (metres, m²). */
function expectClose(got: unknown, want: unknown, path = '$'): void {
	if (typeof want === 'number') {
		expect(typeof got, path).toBe('number');
		const g = got as number;
		expect(Number.isFinite(g), `${path} is finite`).toBe(true);
		expect(Math.abs(g - want) <= Math.max(1e-6, 1e-9 * Math.abs(want)), `${path}: ${g} vs ${want}`).toBe(true);
	} else if (Array.isArray(want)) {
		expect(Array.isArray(got), path).toBe(true);
		expect((got as unknown[]).length, `${path}.length`).toBe(want.length);
		want.forEach((w, i) => expectClose((got as unknown[])[i], w, `${path}[${i}]`));
	} else if (want && typeof want === 'object') {
		expect(got && typeof got === 'object', path).toBe(true);
		expect(Object.keys(got as object).sort(), `${path} keys`).toEqual(Object.keys(want).sort());
		for (const [k, w] of Object.entries(want)) expectClose((got as Record<string, unknown>)[k], w, `${path}.${k}`);
	} else {
		expect(got, path).toEqual(want);
	}
}

function expectNoNaN(x: unknown, path = '$'): void {
	if (typeof x === 'number') expect(Number.isNaN(x), `${path} is NaN`).toBe(false);
	else if (Array.isArray(x)) x.forEach((v, i) => expectNoNaN(v, `${path}[${i}]`));
	else if (x && typeof x === 'object') for (const [k, v] of Object.entries(x)) expectNoNaN(v, `${path}.${k}`);
}

describe('place() on degenerate inputs matches the golden fixtures', () => {
	for (const name of names) {
		it(`place(${name}) matches out/${name}.json`, () => {
			const got = JSON.parse(JSON.stringify(run(name)));
			const outPath = join(root, 'out', `${name}.json`);
			if (process.env.UPDATE_GOLDEN) writeFileSync(outPath, JSON.stringify(got, null, 1) + '\n');
			expect(existsSync(outPath), `${outPath} exists`).toBe(true);
			expectNoNaN(got);
			expectClose(got, JSON.parse(readFileSync(outPath, 'utf8')));
		});
	}
});

describe('place() on degenerate inputs, checked by property', () => {
	const result = (name: string) => {
		const r = run(name);
		if ('error' in r) throw new Error(`${name}: ${r.error.message}`);
		return r;
	};
	const uv = (g: WorkingGrid, x: number, y: number) => [(x - g.x0) / g.cellSize, (g.y0 - y) / g.cellSize];

	it('place(one sensor) stands on the mass centroid', () => {
		const { grid } = load('one-sensor');
		let m = 0;
		let su = 0;
		let sv = 0;
		for (let k = 0; k < grid.mass.length; k++) {
			m += grid.mass[k];
			su += grid.mass[k] * ((k % grid.width) + 0.5);
			sv += grid.mass[k] * (Math.floor(k / grid.width) + 0.5);
		}
		const r = result('one-sensor');
		const [u, v] = uv(grid, r.sensors[0].x, r.sensors[0].y);
		expect(u).toBeCloseTo(su / m, 9);
		expect(v).toBeCloseTo(sv / m, 9);
		// One update reaches the centroid; the second moves 0 m and confirms convergence.
		expect(r.iterations).toBe(2);
		expect(r.converged).toBe(true);
	});

	it('place(coincident sensors) separates them into distinct positions', () => {
		const r = result('coincident-sensors');
		const keys = new Set(r.sensors.map((s) => `${s.x.toFixed(3)},${s.y.toFixed(3)}`));
		expect(keys.size).toBe(3);
		expect(r.converged).toBe(true);
		// Each of the three ends with a share of the mass: cost well below one sensor's.
		const one = place(load('one-sensor').grid, null, [r.sensors[0]], { strategy: 'lloyd' });
		expect(r.cost).toBeLessThan(0.5 * one.cost);
	});

	it('place(coincident fixed sensors) leaves both where they are', () => {
		const { input } = load('coincident-fixed');
		const r = result('coincident-fixed');
		for (const i of [0, 1]) {
			expect(r.sensors[i].x).toBe(input.sensors[i].x);
			expect(r.sensors[i].y).toBe(input.sensors[i].y);
		}
	});

	it('place(collinear sensors, 1 iteration) moves each to its brute-force nearest-cell centroid', () => {
		const { input, grid } = load('collinear-sensors');
		const pu = Float64Array.from(input.sensors, (s) => (s.x - grid.x0) / grid.cellSize);
		const pv = Float64Array.from(input.sensors, (s) => (grid.y0 - s.y) / grid.cellSize);
		const mass = grid.mass.map((m) => m / grid.mass.reduce((a, b) => a + b, 0));
		const b = bruteForceMoments(mass, grid.width, grid.height, pu, pv, null);
		const r = result('collinear-sensors');
		r.sensors.forEach((s, i) => {
			const [u, v] = uv(grid, s.x, s.y);
			expect(u).toBeCloseTo(b.su[i] / b.mass[i], 9);
			expect(v).toBeCloseTo(b.sv[i] / b.mass[i], 9);
		});
		expect(r.history[0].cost).toBeCloseTo(b.cost.reduce((a, c) => a + c, 0) * grid.cellSize ** 2, 6);
	});

	it('place(sensor outside the grid) brings it inside the raster', () => {
		const { grid } = load('sensor-outside-grid');
		const r = result('sensor-outside-grid');
		for (const s of r.sensors) {
			const [u, v] = uv(grid, s.x, s.y);
			expect(u).toBeGreaterThanOrEqual(0);
			expect(u).toBeLessThan(grid.width);
			expect(v).toBeGreaterThanOrEqual(0);
			expect(v).toBeLessThan(grid.height);
		}
	});

	it('place(all-zero raster) leaves sensors unchanged with cost 0, coverage 0, converged', () => {
		const { input } = load('all-zero-raster');
		const r = result('all-zero-raster');
		expect(r.sensors.map((s) => [s.x, s.y])).toEqual(input.sensors.map((s) => [s.x, s.y]));
		expect(r.cost).toBe(0);
		expect(r.coverage).toBe(0);
		expect(r.p95DistanceM).toBe(0);
		expect(r.converged).toBe(true);
		expect(r.iterations).toBe(0);
		expect(r.history).toEqual([{ iteration: 0, cost: 0, coverage: 0 }]);
	});

	it('place(zero sensors, no count) throws EngineInputError', () => {
		const r = run('zero-sensors-no-count');
		expect('error' in r && r.error.name).toBe('EngineInputError');
	});

	it('place(greenfield, count 5, seed 42) names S1..S5, stands on feasible cells and repeats exactly', () => {
		const { grid } = load('greenfield-seeded');
		const a = result('greenfield-seeded');
		const b = result('greenfield-seeded');
		expect(a).toEqual(b);
		expect(a.sensors.map((s) => s.id)).toEqual(['S1', 'S2', 'S3', 'S4', 'S5']);
		for (const s of a.sensors) {
			const [u, v] = uv(grid, s.x, s.y);
			expect(grid.feasible[Math.floor(v) * grid.width + Math.floor(u)]).toBe(1);
			expect(s.mobility).toBe('relocatable');
			expect(s.radius).toBe(75);
		}
	});
});
