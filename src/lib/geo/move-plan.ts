/**
 * Moves for the field crew, from a placement's final sites: which current sensor goes to which
 * site (optimal assignment, minimum total planar travel, within sensors of the same radius), the
 * sites no current sensor takes (installations), the sensors left without a site (removals), and
 * the order to do the moves in. A move is "go to the sensor, carry it to its site"; moves are
 * ordered by a route through their midpoints, and the route's lengths follow the actual path
 * from_1 → to_1 → from_2 → to_2 → … (planar in the working CRS, and geodesic on WGS 84).
 */
import { assignMoves, routeLength, routeOrder, type Point } from '../engine/moves';
import type { PlacementResult, SensorInput } from '../engine/types';
import { geodesicDistance, geodesicPathLength } from './geodesic';

export interface PlannedMove {
	/** The current sensor's id. */
	id: string;
	/** The id of the site (the placed sensor) it goes to. */
	target: string;
	from: { x: number; y: number; lon: number; lat: number };
	to: { x: number; y: number; lon: number; lat: number };
	planarM: number;
	geodesicM: number;
}

export interface MovePlan {
	/** Every movable current sensor with its site (distance 0 when it stays). */
	assignment: PlannedMove[];
	totalPlanarM: number;
	totalGeodesicM: number;
	/** Sensors that do not move at all (fixed). */
	fixed: string[];
	/** Site ids no current sensor takes: new sensors are installed there. */
	installations: string[];
	/** Current movable sensors left without a site. */
	removals: string[];
	route: { order: string[]; planarM: number; geodesicM: number };
}

/**
 * @param sensors the current sensors that took part (working-CRS metres)
 * @param result  the placement's result; its movable sensors are the sites
 */
export function planMoves(sensors: readonly SensorInput[], result: PlacementResult, toLonLat: (x: number, y: number) => [number, number]): MovePlan {
	const sites = result.sensors.filter((s) => s.mobility !== 'fixed');
	const assignment = assignMoves(
		sensors.map((s) => ({ id: s.id, x: s.x, y: s.y, mobility: s.mobility, radius: s.radius })),
		sites.map((s) => ({ x: s.x, y: s.y, radius: s.radius }))
	);
	const jobs = assignment.moves.filter((m) => m.distance > 1e-6);
	const mid: Point[] = jobs.map((m) => [(m.fromX + m.toX) / 2, (m.fromY + m.toY) / 2]);
	const order = routeOrder(null, mid).order;
	const path: Point[] = order.flatMap((k) => [[jobs[k].fromX, jobs[k].fromY] as Point, [jobs[k].toX, jobs[k].toY] as Point]);
	let totalGeodesicM = 0;
	const assigned = assignment.moves.map((m) => {
		const from = toLonLat(m.fromX, m.fromY);
		const to = toLonLat(m.toX, m.toY);
		const g = geodesicDistance(from[0], from[1], to[0], to[1]);
		totalGeodesicM += g;
		return {
			id: m.id,
			target: sites[m.target].id,
			from: { x: m.fromX, y: m.fromY, lon: from[0], lat: from[1] },
			to: { x: m.toX, y: m.toY, lon: to[0], lat: to[1] },
			planarM: m.distance,
			geodesicM: g
		};
	});
	return {
		assignment: assigned,
		totalPlanarM: assignment.total,
		totalGeodesicM,
		fixed: assignment.fixed,
		installations: assignment.unassignedTargets.map((k) => sites[k].id),
		removals: assignment.unassignedSensors,
		route: {
			order: order.map((k) => jobs[k].id),
			planarM: routeLength(null, path, path.map((_, i) => i)),
			geodesicM: geodesicPathLength(path.map(([x, y]) => toLonLat(x, y)))
		}
	};
}
