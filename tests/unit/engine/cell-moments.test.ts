import { describe, expect, it } from 'vitest';
import { place } from '../../../src/lib/engine';
import { bruteForceMoments } from '../../../src/bench/support/brute-force';
import { cellCostAndCoverage, cellMoments } from '../../../src/lib/engine/cell-moments';
import { rowPrefixSums } from '../../../src/lib/engine/prefix-sums';
import { mulberry32 } from '../../../src/lib/engine/prng';

// Oracle: the prefix-sum integration over Voronoi polygons (d3-delaunay + our strips) must equal
// the brute-force nearest-sensor assignment of every cell, O(cells × sensors), which follows
// the definition directly. Positions are random reals, so no cell centre falls on a Voronoi
// edge (ties are measure-zero); 1e-9 relative is ~1e6 × the double rounding of these sums.
const KEYS = ['mass', 'su', 'sv', 'cost', 'diskMass', 'diskSu', 'diskSv'] as const;

function relErr(a: number, b: number): number {
	return Math.abs(a - b) / Math.max(Math.abs(b), 1e-12);
}

/** A random small grid with sensors laid out as `layout` says, and random radii. */
function randomCase(seed: number, layout: 'random' | 'collinear' | 'outside' | 'coincident' | 'clustered') {
	const rnd = mulberry32(seed);
	const w = 3 + Math.floor(rnd() * 40);
	const h = 3 + Math.floor(rnd() * 40);
	const mass = new Float64Array(w * h).map(() => (rnd() < 0.2 ? 0 : rnd()));
	const n = 1 + Math.floor(rnd() * 15);
	const inside = layout !== 'outside';
	const pu = new Float64Array(n).map(() => (inside ? rnd() * w : -5 + rnd() * (w + 10)));
	const pv = new Float64Array(n).map(() => (inside ? rnd() * h : -5 + rnd() * (h + 10)));
	if (layout === 'collinear') {
		const a = rnd() * 3 - 1.5;
		for (let i = 0; i < n; i++) pv[i] = a * pu[i] + rnd() * h * 0.3;
		for (let i = 1; i < n; i++) pv[i] = pv[0] + a * (pu[i] - pu[0]);
	}
	if (layout === 'coincident') for (let i = 1; i < n; i += 2) [pu[i], pv[i]] = [pu[i - 1], pv[i - 1]];
	if (layout === 'clustered') for (let i = 0; i < n; i++) [pu[i], pv[i]] = [w / 2 + rnd() * 0.01, h / 2 + rnd() * 0.01];
	const rho = new Float64Array(n).map(() => rnd() * 10);
	return { mass, w, h, n, pu, pv, rho };
}

function compare(seed: number, layout: 'random' | 'collinear' | 'outside' | 'coincident' | 'clustered') {
	const { mass, w, h, n, pu, pv, rho } = randomCase(seed, layout);
	const fast = cellMoments(rowPrefixSums(mass, w, h), pu, pv, rho);
	const slow = bruteForceMoments(mass, w, h, pu, pv, rho);
	let worst = 0;
	for (const k of KEYS) for (let i = 0; i < n; i++) worst = Math.max(worst, relErr(fast[k][i], slow[k][i]));
	return worst;
}

describe('cellMoments(prefix, sensors) equals brute-force nearest-sensor integration', () => {
	for (const layout of ['random', 'collinear', 'outside', 'coincident', 'clustered'] as const) {
		it(`on 60 random small grids with ${layout} sensors, to 1e-9 relative`, () => {
			let worst = 0;
			for (let s = 0; s < 60; s++) worst = Math.max(worst, compare(1000 * (layout.length + 1) + s, layout));
			expect(worst).toBeLessThan(1e-9);
		});
	}

	it('counts a cell centre on a shared Voronoi edge exactly once (half-open spans)', () => {
		// Sensors at u = 2 and u = 5 on a 7-wide grid: the bisector u = 3.5 passes through the
		// centres of column 3; every cell must be owned by exactly one of them.
		const w = 7;
		const h = 5;
		const mass = new Float64Array(w * h).fill(1 / (w * h));
		const m = cellMoments(rowPrefixSums(mass, w, h), Float64Array.of(2, 5), Float64Array.of(2.5, 2.5), null);
		expect(m.mass[0] + m.mass[1]).toBeCloseTo(1, 12);
		// A diagonal configuration: four sensors symmetric about the grid centre on a 6 × 6 grid.
		const w2 = 6;
		const mass2 = new Float64Array(w2 * w2).fill(1 / 36);
		const m2 = cellMoments(rowPrefixSums(mass2, w2, w2), Float64Array.of(1.5, 4.5, 1.5, 4.5), Float64Array.of(1.5, 1.5, 4.5, 4.5), null);
		expect(m2.mass.reduce((a, b) => a + b, 0)).toBeCloseTo(1, 12);
		for (let i = 0; i < 4; i++) expect(m2.mass[i]).toBeCloseTo(9 / 36, 12);
	});
});

describe('place(…, maxIterations 0) reports the start state', () => {
	it('place(random grid, random sensors, maxIterations 0) has brute-force cost (m²) and coverage', () => {
		const rnd = mulberry32(77);
		for (let t = 0; t < 10; t++) {
			const w = 5 + Math.floor(rnd() * 30);
			const h = 5 + Math.floor(rnd() * 30);
			const cellSize = 5 + rnd() * 20;
			const raw = new Float64Array(w * h).map(() => rnd());
			const total = raw.reduce((a, b) => a + b, 0);
			const mass = raw.map((m) => m / total);
			const grid = { crs: 'EPSG:3035', width: w, height: h, x0: 4_000_000, y0: 3_000_000, cellSize, mass, feasible: new Uint8Array(w * h).fill(1) };
			const n = 1 + Math.floor(rnd() * 8);
			const sensors = Array.from({ length: n }, (_, i) => ({
				id: `S${i}`,
				x: grid.x0 + rnd() * w * cellSize,
				y: grid.y0 - rnd() * h * cellSize,
				radius: (1 + rnd() * 6) * cellSize,
				mobility: 'relocatable' as const
			}));
			const r = place(grid, null, sensors, { strategy: 'range-limited', maxIterations: 0 });
			const pu = Float64Array.from(sensors, (s) => (s.x - grid.x0) / cellSize);
			const pv = Float64Array.from(sensors, (s) => (grid.y0 - s.y) / cellSize);
			const rho = Float64Array.from(sensors, (s) => s.radius / cellSize);
			const b = bruteForceMoments(mass, w, h, pu, pv, rho);
			const cost = b.cost.reduce((a, c) => a + c, 0) * cellSize * cellSize;
			const coverage = b.diskMass.reduce((a, c) => a + c, 0);
			expect(relErr(r.cost, cost)).toBeLessThan(1e-9);
			expect(Math.abs(r.coverage - coverage)).toBeLessThan(1e-12);
			expect(r.history).toHaveLength(1);
			expect(r.iterations).toBe(0);
		}
	});
});

describe('cellMoments on nearly degenerate sensor sets', () => {
	// Sensors within 1e-5 cells of an earlier one count as coincident (the first owns the cell);
	// nearly collinear sets that d3-delaunay gets wrong are rebuilt by half-plane clipping.
	// Reference: brute force with the same merge. At these scales a bisector is only known to
	// about 1e-16 · extent / separation, so a cell centre that close to it may go either way: we
	// require every cell counted exactly once, exact agreement in ≥ 99% of the sets, and at most
	// a few cells' mass moved between near-equidistant sensors in the rest.
	it('keeps a valid partition for near-coincident (1e-12..1e-3 cells) and near-collinear sensors', () => {
		const rnd = mulberry32(99);
		let exact = 0;
		const sets = 400;
		for (let t = 0; t < sets; t++) {
			const w = 3 + Math.floor(rnd() * 30);
			const h = 3 + Math.floor(rnd() * 30);
			const mass = new Float64Array(w * h).map(() => rnd());
			const n = 3 + Math.floor(rnd() * 10);
			const eps = Math.pow(10, -3 - rnd() * 9);
			const a = rnd() * 2 - 1;
			const b = rnd() * h;
			const pu = new Float64Array(n).map(() => rnd() * w);
			const pv = new Float64Array(n).map((_, i) => a * pu[i] + b + (rnd() - 0.5) * eps * w);
			if (t % 3 === 0) {
				for (let i = 1; i < n; i += 3) {
					pu[i] = pu[i - 1] + eps * (rnd() - 0.5);
					pv[i] = pv[i - 1] + eps * (rnd() - 0.5);
				}
			}
			const fast = cellMoments(rowPrefixSums(mass, w, h), pu, pv, null);
			const bu = pu.slice();
			const bv = pv.slice();
			for (let i = 0; i < n; i++) {
				for (let j = 0; j < i; j++) {
					if (bu[j] < 1e8 && Math.hypot(pu[i] - pu[j], pv[i] - pv[j]) <= 1e-5) {
						bu[i] = 1e9;
						bv[i] = 1e9;
					}
				}
			}
			const slow = bruteForceMoments(mass, w, h, bu, bv, null);
			const total = mass.reduce((x, y) => x + y, 0);
			expect(Math.abs(fast.mass.reduce((x, y) => x + y, 0) - total)).toBeLessThan(1e-9 * total);
			let worst = 0;
			let moved = 0;
			for (let i = 0; i < n; i++) {
				worst = Math.max(worst, relErr(fast.mass[i], slow.mass[i]));
				moved += Math.abs(fast.mass[i] - slow.mass[i]);
				expect(Number.isFinite(fast.cost[i])).toBe(true);
			}
			if (worst < 1e-9) exact++;
			else expect(moved).toBeLessThan(2 * 3); // ≤ 3 cells of mass ≤ 1 counted on both sides
		}
		expect(exact / sets).toBeGreaterThan(0.99);
	});
});

describe('cellCostAndCoverage(mass, sensors) equals brute-force nearest-sensor integration', () => {
	// The same oracle and layouts as cellMoments above: the direct sums must give the same cost
	// and disk mass as the definition, and the same as the prefix-sum integration.
	for (const layout of ['random', 'outside', 'coincident'] as const) {
		it(`on 40 random small grids with ${layout} sensors, to 1e-9 relative`, () => {
			let worst = 0;
			for (let s = 0; s < 40; s++) {
				const { mass, w, h, n, pu, pv, rho } = randomCase(7000 + 100 * layout.length + s, layout);
				const direct = cellCostAndCoverage(mass, w, h, pu, pv, rho);
				const slow = bruteForceMoments(mass, w, h, pu, pv, rho);
				const fast = cellMoments(rowPrefixSums(mass, w, h), pu, pv, rho);
				for (let i = 0; i < n; i++) {
					worst = Math.max(worst, relErr(direct.cost[i], slow.cost[i]), relErr(direct.diskMass[i], slow.diskMass[i]));
					worst = Math.max(worst, relErr(direct.cost[i], fast.cost[i]), relErr(direct.diskMass[i], fast.diskMass[i]));
				}
			}
			expect(worst).toBeLessThan(1e-9);
		});
	}

	it('place(…, maxIterations 0) reports the same start cost and coverage as one iteration does', () => {
		// Iteration 0 of a longer run is computed with the prefix sums: its history entry must match
		// the 0-iteration run's direct sums.
		const rnd = mulberry32(42);
		const w = 60;
		const h = 45;
		const grid = { crs: 'EPSG:32633', width: w, height: h, x0: 0, y0: h * 10, cellSize: 10, mass: new Float64Array(w * h).map(() => rnd()), feasible: new Uint8Array(w * h).fill(1) };
		const opts = { strategy: 'range-limited' as const, count: 7, radius: 80, seed: 3 };
		const zero = place(grid, null, [], { ...opts, maxIterations: 0 });
		const one = place(grid, null, [], { ...opts, maxIterations: 1 });
		expect(zero.iterations).toBe(0);
		expect(relErr(zero.cost, one.history[0].cost)).toBeLessThan(1e-12);
		expect(relErr(zero.coverage, one.history[0].coverage)).toBeLessThan(1e-12);
	});
});
