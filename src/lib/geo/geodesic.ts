/**
 * Geodesic (ellipsoidal) lengths on WGS 84 for reports, through GeographicLib's JavaScript port.
 */
import geodesic from 'geographiclib-geodesic';

const WGS84 = geodesic.Geodesic.WGS84;

/** Geodesic distance in metres between two lon/lat points (degrees) on WGS 84. */
export function geodesicDistance(lon1: number, lat1: number, lon2: number, lat2: number): number {
	const r = WGS84.Inverse(lat1, lon1, lat2, lon2, geodesic.Geodesic.DISTANCE);
	return r.s12 ?? Number.NaN;
}

/** Sum of geodesic leg lengths along a path of lon/lat points (degrees), metres. */
export function geodesicPathLength(points: ReadonlyArray<readonly [number, number]>): number {
	let total = 0;
	for (let i = 1; i < points.length; i++) {
		total += geodesicDistance(points[i - 1][0], points[i - 1][1], points[i][0], points[i][1]);
	}
	return total;
}

/**
 * Geodesic distance (m) and initial bearing (degrees clockwise from true north, 0 ≤ b < 360) from
 * the first lon/lat point to the second, on WGS 84. The bearing of coincident points is 0.
 */
export function geodesicDistanceBearing(lon1: number, lat1: number, lon2: number, lat2: number): { distanceM: number; bearingDeg: number } {
	const r = WGS84.Inverse(lat1, lon1, lat2, lon2, geodesic.Geodesic.DISTANCE | geodesic.Geodesic.AZIMUTH);
	const distanceM = r.s12 ?? Number.NaN;
	const azi = distanceM === 0 ? 0 : (r.azi1 ?? Number.NaN);
	return { distanceM, bearingDeg: ((azi % 360) + 360) % 360 };
}

const COMPASS = ['N', 'NNE', 'NE', 'ENE', 'E', 'ESE', 'SE', 'SSE', 'S', 'SSW', 'SW', 'WSW', 'W', 'WNW', 'NW', 'NNW'] as const;

/** The 16-point compass name of a bearing in degrees (N, NNE, …). */
export function compassPoint(bearingDeg: number): (typeof COMPASS)[number] {
	return COMPASS[Math.round((((bearingDeg % 360) + 360) % 360) / 22.5) % 16];
}
