/**
 * Cost of one Lloyd / range-limited iteration on a 1000 × 1000 grid with a smooth invented
 * density (two Gaussian bumps on a gentle slope), for N = 16 … 1024 sensors, and one
 * brute-force (cells × sensors) iteration at N = 256 for comparison.
 * An iteration here = the prefix-sum Voronoi integration (cellMoments) plus the centroid
 * step, which is what place() does per iteration; then the whole of place() once.
 * Printed, never asserted. `npx tsx src/bench/run.ts lloyd` (`--quick`: 5 repetitions).
 *
 * Figures on the shared 2-core build machine, 2026-12-01, load average ≈ 0.8 (ms per
 * iteration, mean / median of 30 after 10 warm-up iterations; other runs under load were up
 * to 2× slower):
 *   N      lloyd          range-limited
 *   16     0.79 / 0.69    0.72 / 0.65
 *   64     1.44 / 0.84    0.94 / 0.94
 *   256    2.53 / 2.17    3.75 / 3.75
 *   1024   8.37 / 8.81    9.21 / 8.96
 *   brute force at N = 256: 929 ms per iteration (prefix-sum on the same lattice: 1.00 ms).
 *   place(), greenfield N = 256, 50 updates, all included: 889 ms (lloyd), 818 ms (range-limited).
 * Cost grows like the rows crossed (≈ height·√N) plus the O(N log N) diagram: 64× the
 * sensors cost ≈ 12× the time.
 */
import { bruteForceMoments } from './support/brute-force';
import { cellMoments, rowScratch } from '../lib/engine/cell-moments';
import { rowPrefixSums } from '../lib/engine/prefix-sums';
import { kMeansPlusPlusSeeds } from '../lib/engine/seeding';
import { place } from '../lib/engine';

function smoothDensity(width: number, height: number): Float64Array {
	const mass = new Float64Array(width * height);
	let total = 0;
	for (let r = 0; r < height; r++) {
		for (let c = 0; c < width; c++) {
			const x = c / width;
			const y = r / height;
			const m =
				0.3 +
				0.5 * x +
				2 * Math.exp(-((x - 0.3) ** 2 + (y - 0.4) ** 2) / 0.02) +
				1.2 * Math.exp(-((x - 0.7) ** 2 + (y - 0.75) ** 2) / 0.05);
			mass[r * width + c] = m;
			total += m;
		}
	}
	for (let k = 0; k < mass.length; k++) mass[k] /= total;
	return mass;
}

function iterate(
	prefix: ReturnType<typeof rowPrefixSums>,
	pu: Float64Array,
	pv: Float64Array,
	rho: Float64Array | null,
	scratch: ReturnType<typeof rowScratch>
): void {
	const m = cellMoments(prefix, pu, pv, rho, scratch);
	for (let i = 0; i < pu.length; i++) {
		const mass = rho ? m.diskMass[i] : m.mass[i];
		if (mass > 0) {
			pu[i] = (rho ? m.diskSu[i] : m.su[i]) / mass;
			pv[i] = (rho ? m.diskSv[i] : m.sv[i]) / mass;
		}
	}
}

export async function run(args: string[]): Promise<void> {
	const width = 1000;
	const height = 1000;
	const quick = args.includes('--quick');
	const reps = quick ? 5 : 30;
	const mass = smoothDensity(width, height);
	let t = performance.now();
	const prefix = rowPrefixSums(mass, width, height);
	console.log(`grid ${width}x${height}; prefix sums built once in ${(performance.now() - t).toFixed(1)} ms`);
	const scratch = rowScratch(height);
	console.log('N      lloyd ms/iter (mean, median)   range-limited ms/iter (mean, median)');
	for (const n of [16, 64, 256, 1024]) {
		// Seeds on a coarse copy of the grid (k-means++ is O(N × cells)), scaled up.
		const coarse = new Float64Array(100 * 100);
		for (let k = 0; k < mass.length; k++) coarse[Math.floor(k / width / 10) * 100 + Math.floor((k % width) / 10)] += mass[k];
		const seeds = kMeansPlusPlusSeeds(coarse, new Uint8Array(100 * 100).fill(1), 100, 100, n, 7);
		const u0 = seeds.u.map((x) => x * 10);
		const v0 = seeds.v.map((x) => x * 10);
		const rho = new Float64Array(n).fill(0.5 * Math.sqrt((width * height) / n));
		const times: string[] = [];
		for (const limited of [false, true]) {
			const pu = u0.slice();
			const pv = v0.slice();
			for (let k = 0; k < 10; k++) iterate(prefix, pu, pv, limited ? rho : null, scratch); // warm-up (JIT)
			const each: number[] = [];
			for (let k = 0; k < reps; k++) {
				t = performance.now();
				iterate(prefix, pu, pv, limited ? rho : null, scratch);
				each.push(performance.now() - t);
			}
			each.sort((a, b) => a - b);
			const mean = each.reduce((a, b) => a + b, 0) / reps;
			times.push(`${mean.toFixed(2)} (median ${each[reps >> 1].toFixed(2)})`);
		}
		console.log(`${String(n).padEnd(6)} ${times[0].padEnd(31)} ${times[1]}`);
	}
	const n = 256;
	const pu = new Float64Array(n).map((_, i) => ((i % 16) + 0.5) * (width / 16));
	const pv = new Float64Array(n).map((_, i) => (Math.floor(i / 16) + 0.5) * (height / 16));
	t = performance.now();
	bruteForceMoments(mass, width, height, pu, pv, null);
	const brute = performance.now() - t;
	t = performance.now();
	cellMoments(prefix, pu, pv, null, scratch);
	const fast = performance.now() - t;
	console.log(`N=256 one brute-force iteration: ${brute.toFixed(0)} ms (prefix-sum: ${fast.toFixed(2)} ms, x${(brute / fast).toFixed(0)})`);

	// The whole of place() (validation, seeding, constraints, history, final p95), 50 updates.
	const grid = { crs: 'EPSG:32633', width, height, x0: 0, y0: height * 10, cellSize: 10, mass, feasible: new Uint8Array(width * height).fill(1) };
	for (const strategy of ['lloyd', 'range-limited'] as const) {
		t = performance.now();
		const r = place(grid, null, [], { strategy, count: 256, radius: 300, seed: 1, maxIterations: 50, tolerance: 0 });
		console.log(`place(1000x1000, 256 new sensors, ${strategy}, 50 updates): ${(performance.now() - t).toFixed(0)} ms in all (${r.iterations} updates)`);
	}
}
