import { describe, expect, it } from 'vitest';
import { EngineInputError, place } from '../../../src/lib/engine';
import type { PlacementOptions, SensorInput, WorkingGrid } from '../../../src/lib/engine';
import { nearestFeasibleCells } from '../../../src/lib/engine/feasible-snap';
import { mulberry32 } from '../../../src/lib/engine/prng';
import { at, gridFrom, sensor, uniformSquare } from './grids';

const toUV = (g: WorkingGrid, x: number, y: number) => [(x - g.x0) / g.cellSize, (g.y0 - y) / g.cellSize];
const feasibleAtXY = (g: WorkingGrid, x: number, y: number) => {
	const [u, v] = toUV(g, x, y);
	return g.feasible[Math.floor(v) * g.width + Math.floor(u)] === 1;
};

describe('place() constraints', () => {
	it('place(…, fixed sensor) never moves it but gives it its share of the area', () => {
		const g = uniformSquare(40, 10);
		const fixed = sensor(g, 'F', 10, 10, 100, { mobility: 'fixed' });
		const mobile = sensor(g, 'M', 11, 12, 100, { mobility: 'mobile' });
		const r = place(g, null, [fixed, mobile], { strategy: 'lloyd' });
		expect(r.sensors[0].x).toBe(fixed.x);
		expect(r.sensors[0].y).toBe(fixed.y);
		expect(r.sensors[0].movedM).toBe(0);
		// The mobile sensor settles on the far side, so the fixed one keeps a cell of its own:
		// with F at (10, 10) the fixed point of M is on the diagonal, beyond the centre.
		const [u, v] = toUV(g, r.sensors[1].x, r.sensors[1].y);
		expect(u).toBeGreaterThan(20);
		expect(v).toBeGreaterThan(20);
		expect(u).toBeCloseTo(v, 6);
	});

	it('place(…, target in an infeasible cell) snaps to the nearest feasible cell centre', () => {
		// A lake (infeasible, no mass) in the middle of a uniform field: one sensor's centroid is
		// the field centre, inside the lake.
		const lake = (u: number, v: number) => Math.hypot(u - 20, v - 20) < 6;
		const g = gridFrom(40, 40, 10, (u, v) => (lake(u, v) ? 0 : 1), (u, v) => !lake(u, v));
		const r = place(g, null, [sensor(g, 'A', 5.5, 5.5, 50)], { strategy: 'lloyd' });
		const s = r.sensors[0];
		expect(feasibleAtXY(g, s.x, s.y)).toBe(true);
		const [u, v] = toUV(g, s.x, s.y);
		// It sits on a cell centre on the lake shore, about 6 cells from the centre.
		expect(u % 1).toBeCloseTo(0.5, 9);
		expect(v % 1).toBeCloseTo(0.5, 9);
		expect(Math.hypot(u - 20, v - 20)).toBeGreaterThanOrEqual(6);
		expect(Math.hypot(u - 20, v - 20)).toBeLessThan(7.5);
	});

	it('place(…, maxTravel) keeps every sensor within maxTravel of its start', () => {
		const g = uniformSquare(40, 10);
		const start = sensor(g, 'A', 4.5, 4.5, 50, { maxTravel: 60 });
		const r = place(g, null, [start], { strategy: 'lloyd' });
		const d = Math.hypot(r.sensors[0].x - start.x, r.sensors[0].y - start.y);
		expect(d).toBeLessThanOrEqual(60 + 1e-9);
		expect(d).toBeGreaterThan(59);
		expect(r.sensors[0].movedM).toBeCloseTo(d, 9);
	});

	it('place(…, minSpacing) rejects moves that bring two sensors closer than minSpacing', () => {
		const g = gridFrom(60, 60, 10, (u, v) => Math.exp(-((u - 30) ** 2 + (v - 30) ** 2) / 50));
		const rnd = mulberry32(4);
		const sensors: SensorInput[] = Array.from({ length: 12 }, (_, i) => sensor(g, `S${i}`, 5 + rnd() * 50, 5 + rnd() * 50, 80));
		const spacing = 90;
		// Start positions at least minSpacing apart.
		for (let i = 0; i < sensors.length; i++) {
			for (let j = 0; j < i; j++) {
				if (Math.hypot(sensors[i].x - sensors[j].x, sensors[i].y - sensors[j].y) < spacing) {
					sensors[i] = { ...sensors[i], ...at(g, 3 + 4.5 * i, 57) };
				}
			}
		}
		const free = place(g, null, sensors, { strategy: 'lloyd' });
		const spaced = place(g, null, sensors, { strategy: 'lloyd', minSpacing: spacing });
		const minDist = (r: typeof free) => {
			let m = Infinity;
			for (let i = 0; i < r.sensors.length; i++)
				for (let j = 0; j < i; j++) m = Math.min(m, Math.hypot(r.sensors[i].x - r.sensors[j].x, r.sensors[i].y - r.sensors[j].y));
			return m;
		};
		expect(minDist(free)).toBeLessThan(spacing); // the constraint binds
		expect(minDist(spaced)).toBeGreaterThanOrEqual(spacing - 1e-9);
	});

	it('nearestFeasibleCells equals a brute-force nearest feasible cell (distance) on random masks', () => {
		const rnd = mulberry32(11);
		for (let t = 0; t < 30; t++) {
			const w = 1 + Math.floor(rnd() * 25);
			const h = 1 + Math.floor(rnd() * 25);
			const feasible = new Uint8Array(w * h).map(() => (rnd() < 0.15 ? 1 : 0));
			feasible[Math.floor(rnd() * w * h)] = 1;
			const near = nearestFeasibleCells(feasible, w, h);
			for (let k = 0; k < w * h; k++) {
				let best = Infinity;
				for (let q = 0; q < w * h; q++) {
					if (!feasible[q]) continue;
					best = Math.min(best, (Math.floor(q / w) - Math.floor(k / w)) ** 2 + ((q % w) - (k % w)) ** 2);
				}
				const got = (Math.floor(near[k] / w) - Math.floor(k / w)) ** 2 + ((near[k] % w) - (k % w)) ** 2;
				expect(feasible[near[k]]).toBe(1);
				expect(got).toBe(best);
			}
		}
	});
});

describe('place() input validation', () => {
	const g = uniformSquare(10, 10);
	const ok = [sensor(g, 'A', 5, 5, 20)];
	const lloyd: PlacementOptions = { strategy: 'lloyd' };
	const cases: [string, () => unknown, RegExp][] = [
		['a mass array of the wrong length', () => place({ ...g, mass: new Float64Array(99) }, null, ok, lloyd), /grid\.mass/],
		['a NaN in the mass', () => place({ ...g, mass: g.mass.map((m, k) => (k === 7 ? NaN : m)) }, null, ok, lloyd), /cell 7/],
		['a negative mass', () => place({ ...g, mass: g.mass.map((m, k) => (k === 3 ? -1 : m)) }, null, ok, lloyd), /grid\.mass/],
		['a zero cell size', () => place({ ...g, cellSize: 0 }, null, ok, lloyd), /cellSize/],
		['a non-integer width', () => place({ ...g, width: 9.5 }, null, ok, lloyd), /width and height/],
		['a feasible mask of the wrong length', () => place({ ...g, feasible: new Uint8Array(5) }, null, ok, lloyd), /grid\.feasible/],
		['no feasible cell', () => place({ ...g, feasible: new Uint8Array(100) }, null, ok, lloyd), /no cell may hold a sensor/],
		['a radius of 0', () => place(g, null, [{ ...ok[0], radius: 0 }], lloyd), /radius/],
		['a NaN position', () => place(g, null, [{ ...ok[0], x: NaN }], lloyd), /finite x\/y/],
		['an unknown mobility', () => place(g, null, [{ ...ok[0], mobility: 'flying' as never }], lloyd), /mobility/],
		['duplicate sensor ids', () => place(g, null, [ok[0], { ...ok[0] }], lloyd), /used by two sensors/],
		['an unknown strategy', () => place(g, null, ok, { strategy: 'annealing' as never }), /unknown strategy/],
		['zero sensors and no count', () => place(g, null, [], lloyd), /nothing to place/],
		['greenfield without a radius', () => place(g, null, [], { ...lloyd, count: 3 }), /radius/],
		['more sensors than feasible cells', () => place(g, null, [], { ...lloyd, count: 101, radius: 5 }), /only 100 cells/],
		['a negative maxIterations', () => place(g, null, ok, { ...lloyd, maxIterations: -1 }), /maxIterations/],
		['a zone map of the wrong length', () => place(g, { ids: ['Z1'], cellZone: new Int32Array(3) }, ok, lloyd), /cellZone/],
		['a zone index out of range', () => place(g, { ids: ['Z1'], cellZone: new Int32Array(100).fill(1) }, ok, lloyd), /names zone 1/]
	];
	for (const [what, run, message] of cases) {
		it(`place() with ${what} throws EngineInputError`, () => {
			let caught: unknown;
			try {
				run();
			} catch (e) {
				caught = e;
			}
			expect(caught).toBeInstanceOf(EngineInputError);
			expect((caught as Error).message).toMatch(message);
		});
	}
});
