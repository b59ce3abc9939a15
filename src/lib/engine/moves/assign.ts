/**
 * Which sensor goes to which target: an optimal assignment minimising total planar travel
 * (Hungarian / Munkres algorithm via the `munkres` package).
 *
 * Fixed sensors never take part. Matching happens only within a group (by default sensors and
 * targets of the same radius, i.e. the same sensor type), so a target computed for a wide-footprint
 * sensor is not handed to a point probe. Counts may differ: surplus targets are installations,
 * surplus sensors are removals.
 */
import munkres from 'munkres';
import type { Mobility } from '../types';

export interface MoveStart {
	id: string;
	x: number;
	y: number;
	mobility?: Mobility;
	/** Matching group (e.g. sensor type); default: the radius, or one group when absent. */
	group?: string | number;
	radius?: number;
}

export interface MoveTarget {
	x: number;
	y: number;
	group?: string | number;
	radius?: number;
}

export interface Move {
	id: string;
	/** Index into targets. */
	target: number;
	fromX: number;
	fromY: number;
	toX: number;
	toY: number;
	/** Planar distance, working-CRS metres. */
	distance: number;
}

export interface Assignment {
	moves: Move[];
	/** Sum of the move distances, metres. */
	total: number;
	/** Movable sensors left without a target (removals). */
	unassignedSensors: string[];
	/** Targets no sensor was assigned to (installations), as indices into targets. */
	unassignedTargets: number[];
	/** Fixed sensors, which stay where they are. */
	fixed: string[];
}

const groupOf = (p: { group?: string | number; radius?: number }): string =>
	p.group !== undefined ? `g:${p.group}` : p.radius !== undefined ? `r:${p.radius}` : 'all';

/** Optimal assignment of movable sensors to targets (minimum total straight-line travel). */
export function assignMoves(current: readonly MoveStart[], targets: readonly MoveTarget[]): Assignment {
	for (const p of [...current, ...targets]) {
		if (!Number.isFinite(p.x) || !Number.isFinite(p.y)) throw new RangeError('assignMoves: positions must be finite numbers');
	}
	const fixed = current.filter((s) => s.mobility === 'fixed').map((s) => s.id);
	const movable = current.map((s, i) => ({ s, i })).filter(({ s }) => s.mobility !== 'fixed');

	const groups = new Map<string, { sensors: number[]; targets: number[] }>();
	const slot = (key: string) => {
		let g = groups.get(key);
		if (!g) groups.set(key, (g = { sensors: [], targets: [] }));
		return g;
	};
	for (const { s, i } of movable) slot(groupOf(s)).sensors.push(i);
	targets.forEach((t, j) => slot(groupOf(t)).targets.push(j));

	const moves: Move[] = [];
	const takenSensor = new Set<number>();
	const takenTarget = new Set<number>();
	for (const g of groups.values()) {
		if (g.sensors.length === 0 || g.targets.length === 0) continue;
		const cost = g.sensors.map((si) => g.targets.map((tj) => Math.hypot(current[si].x - targets[tj].x, current[si].y - targets[tj].y)));
		for (const [a, b] of munkres(cost)) {
			const si = g.sensors[a];
			const tj = g.targets[b];
			takenSensor.add(si);
			takenTarget.add(tj);
			const s = current[si];
			const t = targets[tj];
			moves.push({ id: s.id, target: tj, fromX: s.x, fromY: s.y, toX: t.x, toY: t.y, distance: cost[a][b] });
		}
	}
	moves.sort((p, q) => p.target - q.target);
	let total = 0;
	for (const m of moves) total += m.distance;
	return {
		moves,
		total,
		unassignedSensors: movable.filter(({ i }) => !takenSensor.has(i)).map(({ s }) => s.id),
		unassignedTargets: targets.map((_, j) => j).filter((j) => !takenTarget.has(j)),
		fixed
	};
}
