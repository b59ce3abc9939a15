/**
 * Point in a ring by the even-odd rule (the crossing-number test; Shimrat 1962, CACM Algorithm 112)
 * [from memory]: enough for sanity checks of positions in tests, independent of the app's geometry code.
 */
export function insideRing(lon: number, lat: number, ring: readonly (readonly number[])[]): boolean {
	let c = false;
	for (let i = 0, j = ring.length - 1; i < ring.length; j = i++) {
		const [xi, yi] = ring[i];
		const [xj, yj] = ring[j];
		if (yi > lat !== yj > lat && lon < ((xj - xi) * (lat - yi)) / (yj - yi) + xi) c = !c;
	}
	return c;
}
