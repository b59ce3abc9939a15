/**
 * What a revision adds to the network map: its sensors where they stand, the arrows from each
 * current sensor to its site, the sites with their sensing disks, and the zones shaded by σ
 * (share of sensors − share of importance: below 0 under-served, above 0 over-served). Pure:
 * positions are projected by the caller's function (lon/lat → map metres).
 */
import type { MapPoint } from '$lib/api/client';

export interface OverlaySensor {
	code: string;
	typeId: number | null;
	at: MapPoint;
	radiusM: number;
}

export interface PlanOverlay {
	/** Sensors where they stand (before the plan). */
	standing: OverlaySensor[];
	/** Sites of the plan; empty for the network as it stands. */
	sites: (OverlaySensor & { kind: 'moved' | 'stays' | 'new' | 'anchor' })[];
	arrows: { id: string; from: MapPoint; to: MapPoint }[];
	/** σ per zone code; null without zones. */
	zoneSigma: Record<string, number> | null;
}

export interface RevisionForOverlay {
	inputs: { sensors: { code: string; typeId: number; role: 'moves' | 'anchor' | 'new'; lon: number; lat: number; radiusM: number }[] };
	targets: { features: { geometry: { coordinates: [number, number] }; properties: Record<string, unknown> }[] };
	moves: { id: string; target: string; from: { lon: number; lat: number }; to: { lon: number; lat: number }; planarM: number }[];
	metrics: { zones: { id: string; sigma: number }[]; before: { zones: { id: string; sigma: number }[] } | null };
}

type Project = (lon: number, lat: number) => MapPoint;

function sigmaMap(zones: { id: string; sigma: number }[] | undefined): Record<string, number> | null {
	if (!zones || zones.length === 0) return null;
	return Object.fromEntries(zones.map((z) => [z.id, z.sigma]));
}

function standingOf(rev: RevisionForOverlay, project: Project): OverlaySensor[] {
	return rev.inputs.sensors.filter((s) => s.role !== 'new').map((s) => ({ code: s.code, typeId: s.typeId, at: project(s.lon, s.lat), radiusM: s.radiusM }));
}

/** The network as it stood when the revision's inputs were read, with σ before the run. */
export function standingOverlay(rev: RevisionForOverlay, project: Project): PlanOverlay {
	return { standing: standingOf(rev, project), sites: [], arrows: [], zoneSigma: sigmaMap(rev.metrics.before?.zones) };
}

/** The revision's plan: arrows for the moves longer than 1 m, every site with its disk, σ after. */
export function revisionOverlay(rev: RevisionForOverlay, project: Project): PlanOverlay {
	const moved = new Map(rev.moves.map((m) => [m.target, m]));
	const sites = rev.targets.features.map((f) => {
		const p = f.properties;
		const site = String(p.site);
		const move = moved.get(site);
		const kind: PlanOverlay['sites'][number]['kind'] = p.mobility === 'fixed' ? 'anchor' : !move ? 'new' : move.planarM > 1 ? 'moved' : 'stays';
		return { code: move?.id ?? site, typeId: typeof p.typeId === 'number' ? p.typeId : null, at: project(f.geometry.coordinates[0], f.geometry.coordinates[1]), radiusM: Number(p.radiusM), kind };
	});
	const arrows = rev.moves.filter((m) => m.planarM > 1).map((m) => ({ id: m.id, from: project(m.from.lon, m.from.lat), to: project(m.to.lon, m.to.lat) }));
	return { standing: standingOf(rev, project), sites, arrows, zoneSigma: sigmaMap(rev.metrics.zones) };
}

/** Largest |σ| at full colour; smaller ones fade towards white. */
export const SIGMA_FULL = 0.25;

/** Fill of a zone by σ: ochre when under-served (σ < 0), blue when over-served, none when balanced. */
export function sigmaFill(sigma: number | undefined): { colour: string; opacity: number } {
	if (sigma === undefined || !Number.isFinite(sigma) || Math.abs(sigma) < 0.005) return { colour: '#ffffff', opacity: 0 };
	const strength = Math.min(1, Math.abs(sigma) / SIGMA_FULL);
	return { colour: sigma < 0 ? '#c98a12' : '#0f5a7a', opacity: 0.12 + 0.43 * strength };
}

/** Direction of an arrow for CSS rotation, in degrees clockwise from east on screen (map y points north). */
export function arrowDegrees(from: MapPoint, to: MapPoint): number {
	return (-Math.atan2(to[1] - from[1], to[0] - from[0]) * 180) / Math.PI;
}

/** σ as a signed percentage with one decimal ("+4.2 %", "−3.0 %"; a no-break space before %). */
export function formatSigma(sigma: number): string {
	const v = (sigma * 100).toFixed(1);
	return `${sigma < 0 ? '−' : '+'}${v.replace('-', '')}\u00a0%`;
}

/**
 * The box [xmin, ymin, xmax, ymax] that frames a plan: the study area and every sensor, site and
 * arrow end, padded by 4 % (at least 200 m) on each side; null when there is nothing to frame.
 */
export function planBounds(o: PlanOverlay, studyArea: readonly (readonly MapPoint[])[]): [number, number, number, number] | null {
	const pts: MapPoint[] = [...studyArea.flat(), ...o.standing.map((s) => s.at), ...o.sites.map((s) => s.at), ...o.arrows.flatMap((a) => [a.from, a.to])];
	if (pts.length === 0) return null;
	let [x0, y0, x1, y1] = [Infinity, Infinity, -Infinity, -Infinity];
	for (const [x, y] of pts) {
		x0 = Math.min(x0, x);
		y0 = Math.min(y0, y);
		x1 = Math.max(x1, x);
		y1 = Math.max(y1, y);
	}
	const pad = Math.max(200, 0.04 * Math.max(x1 - x0, y1 - y0));
	return [x0 - pad, y0 - pad, x1 + pad, y1 + pad];
}
