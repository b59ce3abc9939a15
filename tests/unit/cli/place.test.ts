import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import proj4 from 'proj4';
import { Geodesic } from 'geographiclib-geodesic';
import { encodeTiff } from '../../../src/bench/support/tiff-writer';
import { main } from '../../../src/cli/main';

const root = join(import.meta.dirname, '..', '..', '..');
let dir = '';
const f = (name: string) => join(dir, name);

/** Run in this process through main() (fast); `spawned` runs the real binary. */
async function runHere(args: string[]): Promise<{ code: number | null; stdout: string; stderr: string }> {
	let stdout = '';
	let stderr = '';
	const code = await main(args, { stdout: (t) => (stdout += t), stderr: (t) => (stderr += t) });
	return { code, stdout, stderr };
}

function spawned(args: string[]): Promise<{ code: number | null; stdout: string; stderr: string }> {
	return new Promise((resolve) => {
		const child = spawn(process.execPath, [join(root, 'src/cli/bin.js'), ...args], { cwd: root });
		let stdout = '';
		let stderr = '';
		child.stdout.on('data', (d) => (stdout += d));
		child.stderr.on('data', (d) => (stderr += d));
		child.on('close', (code) => resolve({ code, stdout, stderr }));
	});
}

// A 60×40 WGS 84 raster of 0.001° pixels at 15.4°E 48.25°N with one importance peak; -9999 = nodata.
beforeAll(() => {
	dir = mkdtempSync(join(tmpdir(), 'cairnfield-cli-'));
	const w = 60;
	const h = 40;
	const data = Array.from({ length: w * h }, (_, i) => {
		const r = Math.floor(i / w);
		const c = i % w;
		if (r === 0 && c < 5) return -9999;
		return Math.exp(-((c - 40) ** 2 + (r - 15) ** 2) / 200) + 0.05;
	});
	const geo = { tiepoint: [0, 0, 0, 15.4, 48.25, 0], pixelScale: [0.001, 0.001, 0], geoKeys: [[1024, 2], [1025, 1], [2048, 4326]] as Array<[number, number]> };
	writeFileSync(f('imp.tif'), new Uint8Array(encodeTiff({ width: w, height: h, bands: [data], sampleFormat: 3, bitsPerSample: 32, geo, nodata: '-9999' })));
	writeFileSync(f('not-a-tiff.tif'), 'hello, I am text');
	writeFileSync(f('all-nodata.tif'), new Uint8Array(encodeTiff({ width: 4, height: 3, bands: [new Array(12).fill(-9999)], sampleFormat: 3, bitsPerSample: 32, geo, nodata: '-9999' })));
	const pt = (id: string, lon: number, lat: number, extra: Record<string, unknown> = {}) => ({
		type: 'Feature', geometry: { type: 'Point', coordinates: [lon, lat] }, properties: { id, ...extra }
	});
	writeFileSync(f('sensors.geojson'), JSON.stringify({ type: 'FeatureCollection', features: [
		pt('A', 15.41, 48.23, { radius_m: 400 }), pt('B', 15.42, 48.24), pt('C', 15.43, 48.22, { mobility: 'fixed' })
	] }));
	writeFileSync(f('bad-sensors.geojson'), JSON.stringify({ type: 'FeatureCollection', features: [pt('A', 15.41, 48.23, { mobility: 'flying' })] }));
	const box = (id: string, w0: number, s0: number, e0: number, n0: number) => ({
		type: 'Feature', properties: { id }, geometry: { type: 'Polygon', coordinates: [[[w0, s0], [e0, s0], [e0, n0], [w0, n0], [w0, s0]]] }
	});
	// Twelve sensors on a 4 × 3 lattice about 1000 m apart (0.0135° of longitude ≈ 1001 m at 48.24°N,
	// 0.009° of latitude ≈ 1001 m; GeographicLib figures checked in the tests below).
	writeFileSync(f('lattice.geojson'), JSON.stringify({ type: 'FeatureCollection', features: Array.from({ length: 12 }, (_, k) => pt(`L${k}`, 15.405 + (k % 4) * 0.0135, 48.245 - Math.floor(k / 4) * 0.009)) }));
	writeFileSync(f('west-zone.geojson'), JSON.stringify({ type: 'FeatureCollection', features: [box('west', 15.4, 48.21, 15.43, 48.25)] }));
	writeFileSync(f('zones.geojson'), JSON.stringify({ type: 'FeatureCollection', features: [box('west', 15.4, 48.21, 15.43, 48.25), box('east', 15.43, 48.21, 15.46, 48.25)] }));
	writeFileSync(f('exclusions.geojson'), JSON.stringify(box('lake', 15.435, 48.23, 15.445, 48.24)));
	writeFileSync(f('study.geojson'), JSON.stringify({ type: 'FeatureCollection', features: [box('field', 15.41, 48.22, 15.45, 48.245)] }));
	writeFileSync(f('broken.geojson'), '{"type": "FeatureCollection", "features": [');
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const utm33 = '+proj=utm +zone=33 +datum=WGS84 +units=m +no_defs';

describe.concurrent('cairnfield place (greenfield and not-a-TIFF spawn node src/cli/bin.js; the rest run main() in process)', () => {
	it('greenfield: writes an RFC 7946 FeatureCollection with the placement member', async () => {
		const out = f('green.geojson');
		const r = await spawned(['place', '--importance', f('imp.tif'), '--count', '4', '--radius', '300', '--strategy', 'lloyd', '--out', out]);
		expect(r.stderr).toBe('');
		expect(r.code).toBe(0);
		expect(r.stdout).toBe('');
		const doc = JSON.parse(readFileSync(out, 'utf8'));
		expect(doc.type).toBe('FeatureCollection');
		expect(doc.crs).toBeUndefined(); // RFC 7946: no crs member
		expect(doc.features).toHaveLength(4);
		for (const feat of doc.features) {
			expect(feat.type).toBe('Feature');
			expect(feat.geometry.type).toBe('Point');
			const [lon, lat] = feat.geometry.coordinates;
			expect(lon).toBeGreaterThan(15.4);
			expect(lon).toBeLessThan(15.46);
			expect(lat).toBeGreaterThan(48.21);
			expect(lat).toBeLessThan(48.25);
			expect(Object.keys(feat.properties)).toEqual(expect.arrayContaining(['id', 'x', 'y', 'zone', 'moved_m']));
			// x, y are working-CRS metres of the same point: check with proj4 directly
			const [x, y] = proj4('EPSG:4326', utm33, [lon, lat]);
			expect(Math.abs(x - feat.properties.x)).toBeLessThan(1e-4);
			expect(Math.abs(y - feat.properties.y)).toBeLessThan(1e-4);
			expect(feat.properties.moved_m).toBe(0);
		}
		const p = doc.placement;
		expect(p.crs).toBe('EPSG:32633');
		expect(p.strategy).toBe('lloyd');
		expect(typeof p.iterations).toBe('number');
		expect(typeof p.converged).toBe('boolean');
		expect(p.cost).toBeGreaterThan(0);
		expect(p.coverage).toBeGreaterThan(0);
		expect(p.coverage).toBeLessThanOrEqual(1);
		expect(p.history.length).toBeGreaterThan(0);
		expect(Object.keys(p.history[0])).toEqual(['iteration', 'cost', 'coverage']);
		expect(p.zones).toEqual([]);
		expect(p.moves).toBeUndefined();
	});

	it('existing sensors with zones and exclusions: moves, fixed sensor stays, zone summaries', async () => {
		const r = await runHere([
			'place', '--importance', f('imp.tif'), '--sensors', f('sensors.geojson'), '--radius', '250',
			'--strategy', 'zone-balanced', '--zones', f('zones.geojson'), '--exclusions', f('exclusions.geojson'), '--seed', '3'
		]);
		expect(r.stderr).toBe('');
		expect(r.code).toBe(0);
		const doc = JSON.parse(r.stdout);
		expect(doc.features.map((x: { properties: { id: string } }) => x.properties.id).sort()).toEqual(['A', 'B', 'C']);
		const c = doc.features.find((x: { properties: { id: string } }) => x.properties.id === 'C');
		expect(c.properties.moved_m).toBe(0);
		expect(c.geometry.coordinates[0]).toBeCloseTo(15.43, 9);
		expect(c.geometry.coordinates[1]).toBeCloseTo(48.22, 9);
		const p = doc.placement;
		expect(p.zones.map((z: { id: string }) => z.id)).toEqual(['west', 'east']);
		// The zones cover the raster's extent; the working cells straddling its edge keep the mass of
		// their valid part, but a zone holds a cell only by its centre: those edge cells are the gap.
		expect(p.zones.reduce((s: number, z: { mass: number }) => s + z.mass, 0)).toBeCloseTo(1, 2);
		for (const z of p.zones) expect(Object.keys(z)).toEqual(['id', 'mass', 'sensors', 'sigma']);
		const m = p.moves;
		expect(m.fixed).toEqual(['C']);
		expect(m.assignment.map((a: { id: string }) => a.id).sort()).toEqual(['A', 'B']);
		for (const a of m.assignment) {
			// geodesic / planar within the UTM scale band near the central meridian (common practice, no source)
			if (a.planar_m > 1) expect(a.planar_m / a.geodesic_m).toBeGreaterThan(0.9995);
			if (a.planar_m > 1) expect(a.planar_m / a.geodesic_m).toBeLessThan(1.0005);
		}
		expect(m.total_planar_m).toBeCloseTo(m.assignment.reduce((s: number, a: { planar_m: number }) => s + a.planar_m, 0), 6);
		expect(m.route.planar_m).toBeGreaterThanOrEqual(m.total_planar_m - 1e-6);
		// no final position lies in the excluded box
		for (const feat of doc.features) {
			const [lon, lat] = feat.geometry.coordinates;
			expect(lon > 15.436 && lon < 15.444 && lat > 48.231 && lat < 48.239).toBe(false);
		}
	});

	it('--tolerance 0 runs every iteration', async () => {
		const r = await runHere(['place', '--importance', f('imp.tif'), '--count', '3', '--radius', '300', '--max-iterations', '7', '--tolerance', '0']);
		expect(r.code).toBe(0);
		const p = JSON.parse(r.stdout).placement;
		expect(p.iterations).toBe(7);
		expect(p.history.map((h: { iteration: number }) => h.iteration)).toEqual([0, 1, 2, 3, 4, 5, 6, 7]);
	});

	it('--study-area keeps sensors inside; --crs, --cell-size and --zone-grid are honoured', async () => {
		const r = await runHere([
			'place', '--importance', f('imp.tif'), '--count', '3', '--radius', '300', '--study-area', f('study.geojson'),
			'--crs', 'EPSG:3035', '--cell-size', '150', '--zone-grid', '2x1'
		]);
		expect(r.stderr).toBe('');
		const doc = JSON.parse(r.stdout);
		expect(doc.placement.crs).toBe('EPSG:3035');
		expect(doc.placement.cell_size_m).toBe(150);
		expect(doc.placement.cell_size.rule).toBe('requested');
		expect(doc.placement.zones.map((z: { id: string }) => z.id)).toEqual(['Z1', 'Z2']);
		for (const feat of doc.features) {
			const [lon, lat] = feat.geometry.coordinates;
			expect(lon).toBeGreaterThan(15.41);
			expect(lon).toBeLessThan(15.45);
			expect(lat).toBeGreaterThan(48.22);
			expect(lat).toBeLessThan(48.245);
			const [x, y] = proj4('EPSG:4326', '+proj=laea +lat_0=52 +lon_0=10 +x_0=4321000 +y_0=3210000 +ellps=GRS80 +units=m', [lon, lat]);
			expect(Math.abs(x - feat.properties.x)).toBeLessThan(1e-3);
			expect(Math.abs(y - feat.properties.y)).toBeLessThan(1e-3);
		}
	});

	it('--cell-size finer than the pixels is raised to the pixel size, and the output says why', async () => {
		const r = await runHere(['place', '--importance', f('imp.tif'), '--count', '2', '--radius', '300', '--cell-size', '50', '--max-iterations', '0']);
		const p = JSON.parse(r.stdout).placement;
		// 0.001° × 0.001° at 48.23° N: about 74 m × 111 m, √area ≈ 91 m [from memory: 111.3 km a degree
		// of latitude, × cos φ for longitude]
		expect(p.cell_size.rule).toBe('pixel');
		expect(p.cell_size.requested_m).toBe(50);
		expect(p.cell_size_m).toBeGreaterThan(88);
		expect(p.cell_size_m).toBeLessThan(93);
	});

	it('--strategy lloyd runs without --radius and then reports no coverage', async () => {
		const r = await runHere(['place', '--importance', f('imp.tif'), '--count', '4', '--strategy', 'lloyd']);
		expect(r.stderr).toBe('');
		expect(r.code).toBe(0);
		const doc = JSON.parse(r.stdout);
		expect(doc.features).toHaveLength(4);
		expect(doc.placement.coverage).toBeNull();
		expect(doc.placement.cost).toBeGreaterThan(0);
		for (const h of doc.placement.history) expect(h.coverage).toBeNull();
		for (const feat of doc.features) expect(feat.properties.radius_m).toBeNull();
		// Lloyd's step ignores the radius (Lloyd 1982; Du, Faber & Gunzburger 1999, SIAM Review): the same
		// seed gives the same sites with any radius.
		const withRadius = JSON.parse((await runHere(['place', '--importance', f('imp.tif'), '--count', '4', '--strategy', 'lloyd', '--radius', '300'])).stdout);
		expect(withRadius.features.map((x: { geometry: unknown }) => x.geometry)).toEqual(doc.features.map((x: { geometry: unknown }) => x.geometry));
		expect(withRadius.placement.coverage).toBeGreaterThan(0);
	});

	it('--min-spacing keeps every pair of sensors at least that far apart (GeographicLib distances)', async () => {
		const minPair = (doc: { features: { geometry: { coordinates: [number, number] } }[] }) => {
			const pts = doc.features.map((x) => x.geometry.coordinates);
			let min = Infinity;
			for (let i = 0; i < pts.length; i++)
				for (let j = i + 1; j < pts.length; j++) min = Math.min(min, Geodesic.WGS84.Inverse(pts[i][1], pts[i][0], pts[j][1], pts[j][0]).s12!);
			return min;
		};
		const args = ['place', '--importance', f('imp.tif'), '--sensors', f('lattice.geojson'), '--strategy', 'lloyd'];
		const free = JSON.parse((await runHere(args)).stdout);
		expect(minPair(free)).toBeLessThan(950); // without the option the peak pulls two sensors closer
		const r = await runHere([...args, '--min-spacing', '950']);
		expect(r.code).toBe(0);
		// UTM distances are geodesic ones times a scale factor below 1 near the central meridian
		// (0.9996 on it, Snyder 1987, Map Projections: A Working Manual, p. 58), so 950 m planar is at least 950 m true.
		expect(minPair(JSON.parse(r.stdout))).toBeGreaterThanOrEqual(950);
	});

	it('--max-travel keeps every sensor within that distance of where it stood (GeographicLib distances)', async () => {
		const input = JSON.parse(readFileSync(f('lattice.geojson'), 'utf8')).features as { properties: { id: string }; geometry: { coordinates: [number, number] } }[];
		const travel = (doc: { features: { properties: { id: string }; geometry: { coordinates: [number, number] } }[] }) =>
			doc.features.map((x) => {
				const from = input.find((s) => s.properties.id === x.properties.id)!.geometry.coordinates;
				const [lon, lat] = x.geometry.coordinates;
				return Geodesic.WGS84.Inverse(from[1], from[0], lat, lon).s12!;
			});
		const args = ['place', '--importance', f('imp.tif'), '--sensors', f('lattice.geojson'), '--strategy', 'lloyd'];
		expect(Math.max(...travel(JSON.parse((await runHere(args)).stdout)))).toBeGreaterThan(300);
		const r = await runHere([...args, '--max-travel', '300']);
		expect(r.code).toBe(0);
		const moved = travel(JSON.parse(r.stdout));
		// planar 300 m is at most 300 / 0.9996 m on the ellipsoid (UTM scale factor, Snyder 1987 p. 58)
		for (const m of moved) expect(m).toBeLessThanOrEqual(300 / 0.9996 + 1e-6);
		expect(Math.max(...moved)).toBeGreaterThan(299);
	});

	it('zones that hold under 95 % of the importance: a warning on stderr, and the sites stay inside the zones', async () => {
		const r = await runHere(['place', '--importance', f('imp.tif'), '--count', '3', '--radius', '300', '--strategy', 'zone-balanced', '--zones', f('west-zone.geojson')]);
		expect(r.code).toBe(0);
		// The peak sits at column 40 of 60 (15.44°E), east of the one zone (15.40–15.43°E): most importance lies outside it.
		expect(r.stderr).toMatch(/^cairnfield: warning: the zones hold \d+(\.\d)? % of the importance; the \d+(\.\d)? % outside every zone is left out/);
		expect(r.stderr.trimEnd().split('\n')).toHaveLength(1);
		const doc = JSON.parse(r.stdout);
		expect(doc.placement.warnings).toHaveLength(1);
		expect(doc.placement.zones.map((z: { mass: number }) => z.mass)).toEqual([expect.closeTo(1, 9)]);
		for (const feat of doc.features) {
			expect(feat.properties.zone).toBe('west');
			expect(feat.geometry.coordinates[0]).toBeLessThan(15.43);
		}
		// Zones that cover the raster give no warning.
		const quiet = await runHere(['place', '--importance', f('imp.tif'), '--count', '3', '--radius', '300', '--strategy', 'zone-balanced', '--zones', f('zones.geojson')]);
		expect(quiet.stderr).toBe('');
		expect(JSON.parse(quiet.stdout).placement.warnings).toEqual([]);
	});

	it('--help prints the usage and exits 0', async () => {
		const r = await runHere(['place', '--help']);
		expect(r.code).toBe(0);
		expect(r.stdout).toContain('--importance FILE');
		expect(r.stdout).toContain('--zone-grid CxR');
	});

	it('a file that is not a TIFF: exit 2, one line naming the file, nothing written (real process)', async () => {
		const out = f('never-spawned.geojson');
		const r = await spawned(['place', '--importance', f('not-a-tiff.tif'), '--count', '2', '--radius', '100', '--out', out]);
		expect(r.code).toBe(2);
		expect(r.stdout).toBe('');
		expect(r.stderr).toMatch(/^cairnfield: .*not-a-tiff\.tif: not a TIFF file \(no TIFF header\)\n$/);
		expect(existsSync(out)).toBe(false);
	});
});

describe('cairnfield place bad input (in process through main)', () => {
	const bad: Array<[string, () => string[], RegExp]> = [
		['a file that is not a TIFF', () => ['--importance', f('not-a-tiff.tif'), '--count', '2', '--radius', '100'], /not-a-tiff\.tif: not a TIFF/],
		['a missing file', () => ['--importance', f('nope.tif'), '--count', '2', '--radius', '100'], /nope\.tif: no such file/],
		['a missing band', () => ['--importance', f('imp.tif'), '--band', '3', '--count', '2', '--radius', '100'], /band 3 is missing/],
		['an unknown working CRS', () => ['--importance', f('imp.tif'), '--crs', 'EPSG:9999', '--count', '2', '--radius', '100'], /unknown CRS EPSG:9999/],
		['a geographic working CRS', () => ['--importance', f('imp.tif'), '--crs', 'EPSG:4326', '--count', '2', '--radius', '100'], /geographic/],
		['broken JSON', () => ['--importance', f('imp.tif'), '--sensors', f('broken.geojson'), '--radius', '100'], /broken\.geojson: not valid JSON/],
		['a bad mobility', () => ['--importance', f('imp.tif'), '--sensors', f('bad-sensors.geojson'), '--radius', '100'], /mobility must be one of fixed, relocatable, mobile/],
		['a sensor without radius', () => ['--importance', f('imp.tif'), '--sensors', f('sensors.geojson')], /sensor "B" has no radius_m and no --radius/],
		['a raster with no valid cell', () => ['--importance', f('all-nodata.tif'), '--count', '3', '--radius', '100'], /the raster has no valid cells: every cell is nodata, NaN or negative/],
		['a sensor without radius under lloyd is fine, but not under range-limited', () => ['--importance', f('imp.tif'), '--sensors', f('sensors.geojson'), '--strategy', 'range-limited'], /sensor "B" has no radius_m/],
		['more sensors than feasible cells', () => ['--importance', f('imp.tif'), '--count', '100000', '--radius', '100'], /options\.count/],
		['an unknown option', () => ['--importance', f('imp.tif'), '--count', '2', '--radius', '100', '--speed', '3'], /Unknown option '--speed'/]
	];
	it.each(bad)('exits 2 with one line on stderr and writes nothing for %s', async (_label, argv, msg) => {
		const out = f(`never-${Math.random().toString(36).slice(2)}.geojson`);
		const r = await runHere(['place', ...argv(), '--out', out]);
		expect(r.code).toBe(2);
		expect(r.stdout).toBe('');
		expect(r.stderr.endsWith('\n')).toBe(true);
		expect(r.stderr.trimEnd().split('\n')).toHaveLength(1);
		expect(r.stderr).toMatch(msg);
		expect(r.stderr).not.toMatch(/\bat .*\(.*:\d+:\d+\)/); // no stack trace
		expect(existsSync(out)).toBe(false);
	});

	it('an unknown command exits 2', async () => {
		const r = await runHere(['sow']);
		expect(r.code).toBe(2);
		expect(r.stderr).toMatch(/unknown command "sow"/);
	});
});
