/** Words and number formats for field tasks, shared by the analyst's and the technician's pages. */
import { compassPoint } from '$lib/geo/geodesic';

export const KIND_LABELS = { move: 'Move', install: 'Install', remove: 'Remove' } as const;
export const STATE_LABELS = { open: 'Open', started: 'Started', done: 'Done', blocked: 'Blocked', cancelled: 'Cancelled' } as const;

export function formatMetres(m: number): string {
	return m >= 1000 ? `${(m / 1000).toFixed(2)} km` : `${Math.round(m)} m`;
}

export function formatBearing(deg: number): string {
	return `${Math.round(deg) % 360}° ${compassPoint(deg)}`;
}
