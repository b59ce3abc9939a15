import { describe, expect, it } from 'vitest';
import { bruteForceMoments } from '../../../src/lib/engine/brute-force';
import { cellMoments } from '../../../src/lib/engine/cell-moments';
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

function compare(seed: number, layout: 'random' | 'collinear' | 'outside' | 'coincident' | 'clustered') {
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
