import type { CellMoments } from '../../lib/engine/cell-moments';

/**
 * Reference integration by brute force: every cell with mass is assigned to its nearest
 * sensor (lowest index on a tie), O(cells × sensors). The oracle for cellMoments in the
 * tests and the baseline in the benchmark; never used by place().
 */
export function bruteForceMoments(
	mass: Float64Array,
	width: number,
	height: number,
	pu: Float64Array,
	pv: Float64Array,
	rho: Float64Array | null
): CellMoments {
	const n = pu.length;
	const out: CellMoments = {
		mass: new Float64Array(n),
		su: new Float64Array(n),
		sv: new Float64Array(n),
		cost: new Float64Array(n),
		diskMass: new Float64Array(n),
		diskSu: new Float64Array(n),
		diskSv: new Float64Array(n)
	};
	if (n === 0) return out;
	for (let r = 0; r < height; r++) {
		const v = r + 0.5;
		for (let c = 0; c < width; c++) {
			const phi = mass[r * width + c];
			if (phi === 0) continue;
			const u = c + 0.5;
			let best = 0;
			let bestD2 = Infinity;
			for (let i = 0; i < n; i++) {
				const du = u - pu[i];
				const dv = v - pv[i];
				const d2 = du * du + dv * dv;
				if (d2 < bestD2) {
					bestD2 = d2;
					best = i;
				}
			}
			out.mass[best] += phi;
			out.su[best] += u * phi;
			out.sv[best] += v * phi;
			out.cost[best] += bestD2 * phi;
			if (rho && bestD2 <= rho[best] * rho[best]) {
				out.diskMass[best] += phi;
				out.diskSu[best] += u * phi;
				out.diskSv[best] += v * phi;
			}
		}
	}
	return out;
}
