import type { CellMoments } from './cell-moments';

/**
 * The Lloyd step: each movable sensor's target is the mass centroid of its Voronoi cell
 * (lloyd), or of its cell ∩ its sensing disk (range-limited, `limited`). A sensor with no mass
 * there, or a fixed one, keeps its position as target. Grid units.
 */
export function centroidTargets(
	moments: CellMoments,
	movable: readonly boolean[],
	pu: Float64Array,
	pv: Float64Array,
	limited: boolean
): { u: Float64Array; v: Float64Array } {
	const n = pu.length;
	const u = pu.slice();
	const v = pv.slice();
	const mass = limited ? moments.diskMass : moments.mass;
	const su = limited ? moments.diskSu : moments.su;
	const sv = limited ? moments.diskSv : moments.sv;
	for (let i = 0; i < n; i++) {
		if (movable[i] && mass[i] > 0) {
			u[i] = su[i] / mass[i];
			v[i] = sv[i] / mass[i];
		}
	}
	return { u, v };
}
