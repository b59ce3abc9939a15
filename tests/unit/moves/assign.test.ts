import { describe, expect, it } from 'vitest';
import { assignMoves, type MoveStart, type MoveTarget } from '../../../src/lib/engine/moves/assign';

function rng(seed: number) {
	let s = seed;
	return () => ((s = (s * 16807) % 2147483647) / 2147483647);
}

/** Oracle: the best total over all injective maps from the smaller side to the larger. */
function bruteForce(sensors: MoveStart[], targets: MoveTarget[]): number {
	const d = (i: number, j: number) => Math.hypot(sensors[i].x - targets[j].x, sensors[i].y - targets[j].y);
	const m = Math.min(sensors.length, targets.length);
	let best = Infinity;
	const walk = (i: number, usedS: Set<number>, usedT: Set<number>, acc: number, picked: number) => {
		if (picked === m) {
			best = Math.min(best, acc);
			return;
		}
		if (sensors.length <= targets.length) {
			for (let j = 0; j < targets.length; j++) if (!usedT.has(j)) { usedT.add(j); walk(i + 1, usedS, usedT, acc + d(i, j), picked + 1); usedT.delete(j); }
		} else {
			for (let k = 0; k < sensors.length; k++) if (!usedS.has(k)) { usedS.add(k); walk(i + 1, usedS, usedT, acc + d(k, i), picked + 1); usedS.delete(k); }
		}
	};
	walk(0, new Set(), new Set(), 0, 0);
	return best;
}

/** Greedy baseline: repeatedly take the closest remaining pair. */
function greedy(sensors: MoveStart[], targets: MoveTarget[]): number {
	const pairs: Array<[number, number, number]> = [];
	sensors.forEach((s, i) => targets.forEach((t, j) => pairs.push([Math.hypot(s.x - t.x, s.y - t.y), i, j])));
	pairs.sort((a, b) => a[0] - b[0]);
	const us = new Set<number>();
	const ut = new Set<number>();
	let total = 0;
	for (const [dd, i, j] of pairs) if (!us.has(i) && !ut.has(j)) { us.add(i); ut.add(j); total += dd; }
	return total;
}

describe('assignMoves', () => {
	it('is optimal against brute force and never worse than greedy on random cases', () => {
		const rnd = rng(5);
		for (let t = 0; t < 60; t++) {
			const ns = 1 + (t % 6);
			const nt = 1 + ((t * 7) % 6);
			const sensors: MoveStart[] = Array.from({ length: ns }, (_, i) => ({ id: `s${i}`, x: rnd() * 1000, y: rnd() * 1000 }));
			const targets: MoveTarget[] = Array.from({ length: nt }, () => ({ x: rnd() * 1000, y: rnd() * 1000 }));
			const a = assignMoves(sensors, targets);
			expect(a.moves.length).toBe(Math.min(ns, nt));
			expect(a.total).toBeCloseTo(bruteForce(sensors, targets), 6);
			expect(a.total).toBeLessThanOrEqual(greedy(sensors, targets) + 1e-9);
			expect(a.unassignedSensors.length).toBe(ns - a.moves.length);
			expect(a.unassignedTargets.length).toBe(nt - a.moves.length);
		}
	});
	it('swaps crossing moves (the textbook case where greedy loses)', () => {
		// greedy takes s0→t0 (distance 1) and then s1→t1 far away; optimal does better
		const sensors: MoveStart[] = [{ id: 'a', x: 1, y: 0 }, { id: 'b', x: -10, y: 0 }];
		const targets: MoveTarget[] = [{ x: 0, y: 0 }, { x: 11, y: 0 }];
		const a = assignMoves(sensors, targets);
		expect(a.total).toBeCloseTo(20, 9);
		expect(greedy(sensors, targets)).toBeCloseTo(22, 9);
	});
	it('leaves fixed sensors out, and matches only within a radius group', () => {
		const sensors: MoveStart[] = [
			{ id: 'F', x: 0, y: 0, mobility: 'fixed', radius: 50 },
			{ id: 'wide', x: 0, y: 0, radius: 200 },
			{ id: 'probe', x: 100, y: 0, radius: 50 }
		];
		const targets: MoveTarget[] = [{ x: 100, y: 10, radius: 200 }, { x: 0, y: 10, radius: 50 }];
		const a = assignMoves(sensors, targets);
		expect(a.fixed).toEqual(['F']);
		expect(a.moves.map((m) => [m.id, m.target])).toEqual([['wide', 0], ['probe', 1]]);
		expect(a.total).toBeCloseTo(2 * Math.hypot(100, 10), 9);
	});
	it('degenerate inputs: nothing to move, all fixed, no targets', () => {
		expect(assignMoves([], []).moves).toEqual([]);
		const allFixed = assignMoves([{ id: 'x', x: 0, y: 0, mobility: 'fixed' }], [{ x: 5, y: 5 }]);
		expect(allFixed.moves).toEqual([]);
		expect(allFixed.unassignedTargets).toEqual([0]);
		expect(assignMoves([{ id: 'x', x: 0, y: 0 }], []).unassignedSensors).toEqual(['x']);
		expect(() => assignMoves([{ id: 'x', x: Number.NaN, y: 0 }], [])).toThrow(RangeError);
	});
});
