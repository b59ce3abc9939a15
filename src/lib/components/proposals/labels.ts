/** Words and number formats of the proposal pages. Pure. */
export type RevisionStateName = 'draft' | 'submitted' | 'approved' | 'rejected' | 'superseded';

export const STATE_LABELS: Record<RevisionStateName | 'empty', string> = {
	empty: 'No runs yet',
	draft: 'Draft',
	submitted: 'Waiting for review',
	approved: 'Approved: the plan',
	rejected: 'Rejected',
	superseded: 'Superseded'
};

/** Badge colours by state (text stays dark enough on each fill for WCAG AA). */
export const STATE_BADGE: Record<RevisionStateName | 'empty', string> = {
	empty: 'bg-peat-100 text-peat-800',
	draft: 'bg-peat-100 text-peat-800',
	submitted: 'bg-ochre-100 text-peat-900',
	approved: 'bg-fell-100 text-fell-800',
	rejected: 'bg-rust-100 text-rust-700',
	superseded: 'bg-peat-100 text-peat-700'
};

export const STRATEGY_LABELS: Record<string, string> = { lloyd: 'Lloyd', 'range-limited': 'Range-limited', 'zone-balanced': 'Zone-balanced' };

/** Which part of the working grid's cell-size rule (src/lib/geo/cell-size.ts) decided a run's cells. */
export const CELL_RULE_LABELS: Record<string, string> = { radius: 'by sensing radius', budget: 'by cell budget', pixel: 'by importance pixel', requested: 'as asked for' };

export function percent(v: number | null | undefined, digits = 1): string {
	return v === null || v === undefined || !Number.isFinite(v) ? '—' : `${(v * 100).toFixed(digits)}\u00a0%`;
}

/** Metres with a thin-space thousands separator; kilometres with one decimal from 10 km. */
export function distance(m: number | null | undefined): string {
	if (m === null || m === undefined || !Number.isFinite(m)) return '—';
	if (m >= 10_000) return `${(m / 1000).toFixed(1)}\u00a0km`;
	return `${Math.round(m).toString().replace(/\B(?=(\d{3})+(?!\d))/g, '\u2009')}\u00a0m`;
}

/** Locational cost H (m²) in km² with three significant figures. */
export function cost(h: number | null | undefined): string {
	if (h === null || h === undefined || !Number.isFinite(h)) return '—';
	return `${Number((h / 1e6).toPrecision(3))}\u00a0km²`;
}

export function when(iso: string | null | undefined): string {
	if (!iso) return '—';
	return new Date(iso).toISOString().slice(0, 16).replace('T', ' ') + ' UTC';
}
