/**
 * The README's example of the command line, run as written there (only --out is redirected): it must
 * print a plan with every sensor inside the study area, out of the exclusions and in a zone.
 */
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { main } from '../../../src/cli/main';
import { insideRing } from '../../helpers/even-odd';

const root = join(import.meta.dirname, '..', '..', '..');
const dir = mkdtempSync(join(tmpdir(), 'cairnfield-readme-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** The argument list of the first `cairnfield -- place` command in README.md, joined across line breaks. */
function readmeExample(): string[] {
	const text = readFileSync(join(root, 'README.md'), 'utf8');
	const m = /npm run --silent cairnfield -- (place (?:[^\n]*\\\n)*[^\n]*)/.exec(text);
	if (!m) throw new Error('README.md has no `cairnfield -- place` example');
	return m[1].replace(/\\\n/g, ' ').trim().split(/\s+/);
}

/** Inside the exterior ring of one of the file's polygons. */
function inside(lon: number, lat: number, file: string): boolean {
	const fc = JSON.parse(readFileSync(join(root, file), 'utf8'));
	return fc.features.some((f: { geometry: { coordinates: [number, number][][] } }) => insideRing(lon, lat, f.geometry.coordinates[0]));
}

describe('the README example of cairnfield place', () => {
	it('uses the study area and gives a plan with every sensor inside it, each in a zone, no warning', async () => {
		const args = readmeExample();
		const outAt = args.indexOf('--out');
		expect(outAt).toBeGreaterThan(0);
		const out = join(dir, 'sites.geojson');
		args[outAt + 1] = out;
		expect(args).toContain('--study-area');
		let stderr = '';
		const code = await main(args, { stdout: () => undefined, stderr: (t) => (stderr += t) });
		expect(stderr).toBe('');
		expect(code).toBe(0);
		const doc = JSON.parse(readFileSync(out, 'utf8'));
		const count = Number(args[args.indexOf('--count') + 1]);
		expect(doc.features).toHaveLength(count);
		for (const f of doc.features) {
			const [lon, lat] = f.geometry.coordinates;
			expect(inside(lon, lat, 'data/demo/study-area.geojson'), f.properties.id).toBe(true);
			expect(inside(lon, lat, 'data/demo/exclusions.geojson'), f.properties.id).toBe(false);
			expect(f.properties.zone, f.properties.id).not.toBeNull();
		}
		const zones = doc.placement.zones as { mass: number; sensors: number }[];
		expect(zones.reduce((s, z) => s + z.mass, 0)).toBeCloseTo(1, 9);
		for (const z of zones) expect(z.sensors).toBeGreaterThan(0);
		expect(doc.placement.warnings).toEqual([]);
		expect(doc.placement.coverage).toBeGreaterThan(0);
	});
});
