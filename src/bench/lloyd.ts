/**
 * Cost of one Lloyd / range-limited iteration on a 1000 × 1000 grid with a smooth invented
 * density (two Gaussian bumps on a gentle slope), for N = 16 … 1024 sensors, and one
 * brute-force (cells × sensors) iteration at N = 256 for comparison.
 * An iteration here = the prefix-sum Voronoi integration (cellMoments) plus the centroid
 * step, which is what place() does per iteration. Figures: see the report in the engine's
 * commit history; printed, never asserted.
 */
import { bruteForceMoments } from '../lib/engine/brute-force';
import { cellMoments, rowScratch } from '../lib/engine/cell-moments';
import { rowPrefixSums } from '../lib/engine/prefix-sums';
import { kMeansPlusPlusSeeds } from '../lib/engine/seeding';

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
	const feasible = new Uint8Array(width * height).fill(1);
	let t = performance.now();
	const prefix = rowPrefixSums(mass, width, height);
	console.log(`grid ${width}x${height}; prefix sums built once in ${(performance.now() - t).toFixed(1)} ms`);
	const scratch = rowScratch(height);
	console.log('N      lloyd ms/iter   range-limited ms/iter');
	for (const n of [16, 64, 256, 1024]) {
		// Seeds on a coarse copy of the grid (k-means++ is O(N × cells)), scaled up.
		const coarse = new Float64Array(100 * 100);
		for (let k = 0; k < mass.length; k++) coarse[Math.floor(k / width / 10) * 100 + Math.floor((k % width) / 10)] += mass[k];
		const seeds = kMeansPlusPlusSeeds(coarse, new Uint8Array(100 * 100).fill(1), 100, 100, n, 7);
		const u0 = seeds.u.map((x) => x * 10);
		const v0 = seeds.v.map((x) => x * 10);
		const rho = new Float64Array(n).fill(0.5 * Math.sqrt((width * height) / n));
		const times: number[] = [];
		for (const limited of [false, true]) {
			const pu = u0.slice();
			const pv = v0.slice();
			iterate(prefix, pu, pv, limited ? rho : null, scratch); // warm-up
			t = performance.now();
			for (let k = 0; k < reps; k++) iterate(prefix, pu, pv, limited ? rho : null, scratch);
			times.push((performance.now() - t) / reps);
		}
		console.log(`${String(n).padEnd(6)} ${times[0].toFixed(2).padStart(14)} ${times[1].toFixed(2).padStart(22)}`);
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
	void feasible;
}
