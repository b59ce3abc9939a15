/** TSPLIB 95 reading and distance functions, following the TSPLIB 95 documentation (Reinelt 1995). */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

export interface TspInstance {
	name: string;
	type: string;
	coords: Array<[number, number]>;
}

export function loadTsp(name: string): TspInstance {
	const path = fileURLToPath(new URL(`../../fixtures/geo/tsplib/${name}.tsp`, import.meta.url));
	const lines = readFileSync(path, 'utf8').split(/\r?\n/);
	let type = '';
	const coords: Array<[number, number]> = [];
	let inCoords = false;
	for (const raw of lines) {
		const line = raw.trim();
		if (line.startsWith('EDGE_WEIGHT_TYPE')) type = line.split(':')[1].trim();
		else if (line === 'NODE_COORD_SECTION') inCoords = true;
		else if (line === 'EOF') break;
		else if (inCoords && line) {
			const [, x, y] = line.split(/\s+/).map(Number);
			coords.push([x, y]);
		}
	}
	return { name, type, coords };
}

/** TSPLIB EUC_2D: nint(Euclidean distance). */
export const euc2d = (a: readonly [number, number], b: readonly [number, number]) => Math.round(Math.hypot(a[0] - b[0], a[1] - b[1]));

/** TSPLIB ATT pseudo-Euclidean: r = sqrt((dx² + dy²)/10); t = nint(r); d = t < r ? t + 1 : t. */
export const att = (a: readonly [number, number], b: readonly [number, number]) => {
	const r = Math.sqrt(((a[0] - b[0]) ** 2 + (a[1] - b[1]) ** 2) / 10);
	const t = Math.round(r);
	return t < r ? t + 1 : t;
};

/** TSPLIB GEO: coordinates are DDD.MM; idealised sphere of radius 6378.388 km; truncated km. */
export const geo = (a: readonly [number, number], b: readonly [number, number]) => {
	const PI = 3.141592;
	const rad = (v: number) => {
		const deg = Math.trunc(v);
		return (PI * (deg + (5 * (v - deg)) / 3)) / 180;
	};
	const [lat1, lon1, lat2, lon2] = [rad(a[0]), rad(a[1]), rad(b[0]), rad(b[1])];
	const RRR = 6378.388;
	const q1 = Math.cos(lon1 - lon2);
	const q2 = Math.cos(lat1 - lat2);
	const q3 = Math.cos(lat1 + lat2);
	return Math.trunc(RRR * Math.acos(0.5 * ((1 + q1) * q2 - (1 - q1) * q3)) + 1);
};
