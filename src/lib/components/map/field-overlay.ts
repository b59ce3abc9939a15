/**
 * What the field has done to a plan, for the network map: each task's planned position (the
 * site, or the sensor to remove), where it was installed, the offset between them and whether it
 * is beyond the network's tolerance. Pure: positions are projected by the caller's function
 * (lon/lat → map metres); the offsets are the ones the server measured (geodesic metres).
 */
import type { MapPoint } from '$lib/api/client';

type State = 'open' | 'started' | 'done' | 'blocked' | 'cancelled';

export interface FieldTaskForOverlay {
	id: number;
	kind: 'move' | 'install' | 'remove';
	sensorCode: string;
	state: State;
	target: { lon: number; lat: number };
	installed: { lon: number; lat: number } | null;
	offsetM: number | null;
	offsetFlagged: boolean;
}

export interface FieldOverlayItem {
	id: number;
	code: string;
	kind: FieldTaskForOverlay['kind'];
	state: State;
	planned: MapPoint;
	installed: MapPoint | null;
	offsetM: number | null;
	flagged: boolean;
}

export interface FieldOverlay {
	items: FieldOverlayItem[];
}

type Project = (lon: number, lat: number) => MapPoint;

/** The plan's tasks on the map; cancelled tasks are left out (they belong to no plan in force). */
export function fieldOverlay(tasks: readonly FieldTaskForOverlay[], project: Project): FieldOverlay {
	return {
		items: tasks
			.filter((t) => t.state !== 'cancelled')
			.map((t) => ({
				id: t.id,
				code: t.sensorCode,
				kind: t.kind,
				state: t.state,
				planned: project(t.target.lon, t.target.lat),
				installed: t.installed ? project(t.installed.lon, t.installed.lat) : null,
				offsetM: t.offsetM,
				flagged: t.offsetFlagged
			}))
	};
}

/** Installed points farther than this from their site (a typing slip, a wrong fix) do not stretch the frame. */
export const FRAME_OFFSET_MAX_M = 1000;

/**
 * The box [xmin, ymin, xmax, ymax] around every planned point and every installed one within
 * FRAME_OFFSET_MAX_M of its site, padded by `pad` metres; null when empty. A far-off installation
 * is still drawn (its line leaves the frame) and listed with its offset.
 */
export function fieldBounds(o: FieldOverlay, pad = 150): [number, number, number, number] | null {
	const near = (i: FieldOverlayItem) => i.installed !== null && i.offsetM !== null && i.offsetM <= FRAME_OFFSET_MAX_M;
	const pts = o.items.flatMap((i) => (near(i) ? [i.planned, i.installed!] : [i.planned]));
	if (pts.length === 0) return null;
	const xs = pts.map((p) => p[0]);
	const ys = pts.map((p) => p[1]);
	return [Math.min(...xs) - pad, Math.min(...ys) - pad, Math.max(...xs) + pad, Math.max(...ys) + pad];
}

/** The colour of a task's planned marker by state (done green, blocked red, else dark). */
export function stateColour(state: State): string {
	return state === 'done' ? '#1e6b3a' : state === 'blocked' ? '#b3261e' : '#17211d';
}
