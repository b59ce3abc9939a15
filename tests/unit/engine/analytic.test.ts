import { describe, expect, it } from 'vitest';
import { place } from '../../../src/lib/engine';
import { at, gridFrom, sensor, uniformSquare } from './grids';

// Analytic checks on a uniform square of side a (textbook results, no source needed beyond the
// definition of the second moment): a uniform square has per-axis variance a²/12, so one sensor
// belongs at the centre with H = a²/12 + a²/12 = a²/6; four sensors belong at the quadrant
// centres, each quadrant of side a/2 giving H = (a/2)²/6 = a²/24.
// The engine places point masses at cell centres: n cells of size s along an axis have variance
// s²(n² − 1)/12 (discrete uniform), i.e. the continuous value minus s²/12 per axis. We check the
// exact discrete value to 1e-9 and the continuous one within that known offset.
describe('place(uniformSquare, …) against the analytic optimum', () => {
	const n = 40;
	const s = 25; // metres per cell: a = 1000 m
	const a = n * s;
	const grid = uniformSquare(n, s);

	it('place(uniformSquare, 1 sensor) reaches the centre with H = a²/6', () => {
		const r = place(grid, null, [sensor(grid, 'A', 3.3, 31.7, 100)], { strategy: 'lloyd' });
		const centre = at(grid, n / 2, n / 2);
		expect(r.sensors[0].x).toBeCloseTo(centre.x, 6);
		expect(r.sensors[0].y).toBeCloseTo(centre.y, 6);
		const discrete = (2 * s * s * (n * n - 1)) / 12;
		expect(r.cost).toBeCloseTo(discrete, 6);
		expect(Math.abs(r.cost - (a * a) / 6)).toBeLessThanOrEqual((s * s) / 6 + 1e-6);
		expect(r.converged).toBe(true);
	});

	it('place(uniformSquare, 4 sensors) reaches the quadrant centres with H = a²/24', () => {
		const start = [
			[5, 7],
			[33, 4],
			[8, 36],
			[30, 28]
		];
		const r = place(
			grid,
			null,
			start.map(([u, v], i) => sensor(grid, `S${i + 1}`, u, v, 200)),
			{ strategy: 'lloyd' }
		);
		const got = r.sensors.map((p) => [(p.x - grid.x0) / s, (grid.y0 - p.y) / s]);
		const want = [
			[10, 10],
			[30, 10],
			[10, 30],
			[30, 30]
		];
		for (let i = 0; i < 4; i++) {
			expect(got[i][0]).toBeCloseTo(want[i][0], 6);
			expect(got[i][1]).toBeCloseTo(want[i][1], 6);
		}
		const m = n / 2;
		expect(r.cost).toBeCloseTo((2 * s * s * (m * m - 1)) / 12, 6);
		expect(Math.abs(r.cost - (a * a) / 24)).toBeLessThanOrEqual((s * s) / 6 + 1e-6);
		// Coverage: a disk of radius 200 m fits inside each 500 m quadrant: share π·200²/(4·500²)·4.
		expect(r.coverage).toBeCloseTo((Math.PI * 200 * 200 * 4) / (a * a), 1);
	});

	it('place(uniformSquare, 4 sensors, lloyd, maxIterations 15, tolerance 0) performs exactly 15 updates', () => {
		const seen: number[] = [];
		const r = place(grid, null, [], {
			strategy: 'lloyd',
			count: 4,
			radius: 100,
			seed: 9,
			maxIterations: 15,
			tolerance: 0,
			onIteration: (e) => seen.push(e.iteration)
		});
		expect(r.iterations).toBe(15);
		expect(r.history.map((h) => h.iteration)).toEqual(Array.from({ length: 16 }, (_, i) => i));
		expect(seen).toEqual(r.history.map((h) => h.iteration));
		// Lloyd never increases the cost.
		for (let k = 1; k < r.history.length; k++) expect(r.history[k].cost).toBeLessThanOrEqual(r.history[k - 1].cost + 1e-9);
	});

	it('reports p95DistanceM as the mass-weighted 95th percentile of the nearest-sensor distance', () => {
		const g = gridFrom(30, 20, 10, (u, v) => 1 + u + 0.5 * v);
		const r = place(g, null, [sensor(g, 'A', 7.2, 5.1, 50), sensor(g, 'B', 21.7, 13.4, 50)], { strategy: 'lloyd', maxIterations: 0 });
		// Brute force: sort every cell by its distance to the nearer sensor.
		const rows: [number, number][] = [];
		for (let rr = 0; rr < 20; rr++) {
			for (let c = 0; c < 30; c++) {
				const d = Math.min(Math.hypot(c + 0.5 - 7.2, rr + 0.5 - 5.1), Math.hypot(c + 0.5 - 21.7, rr + 0.5 - 13.4)) * 10;
				rows.push([d, g.mass[rr * 30 + c]]);
			}
		}
		rows.sort((p, q) => p[0] - q[0]);
		let acc = 0;
		let want = 0;
		for (const [d, m] of rows) {
			acc += m;
			if (acc >= 0.95 - 1e-12) {
				want = d;
				break;
			}
		}
		expect(r.p95DistanceM).toBeCloseTo(want, 6);
	});
});
