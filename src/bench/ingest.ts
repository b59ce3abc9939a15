/**
 * Ingest benchmark: a 4000 × 4000 Float32 GeoTIFF (64 MB of samples) is read with readGeoTiff and
 * resampled into a WorkingGrid, for three cases:
 *   wgs84→utm   geographic raster (0.0001° pixels near 15.2°E 48.2°N) reprojected to UTM 33N
 *   utm→utm     the same size in UTM 33N (10 m pixels), no reprojection (identity lattice)
 *   utm→laea    the UTM raster reprojected to ETRS89-LAEA (EPSG:3035)
 * Each case runs in a fresh child process so its peak memory (getrusage maxRSS) is its own; the
 * files are generated once in os.tmpdir() and not timed. Goal: under 5 s and under 1 GB per case.
 * Prints figures; never fails on speed.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { readGeoTiff } from '../lib/geo/geotiff';
import { encodeTiff } from './support/tiff-writer';
import { buildWorkingGrid } from '../lib/geo/working-grid';

const SIZE = 4000;

interface Case {
	name: string;
	file: string;
	crs?: string;
}

function generate(file: string, geographic: boolean): void {
	if (existsSync(file)) return;
	const n = SIZE * SIZE;
	const data = new Float32Array(n);
	for (let r = 0; r < SIZE; r++) {
		for (let c = 0; c < SIZE; c++) {
			const x = c / SIZE;
			const y = r / SIZE;
			data[r * SIZE + c] = 0.2 + Math.exp(-((x - 0.3) ** 2 + (y - 0.6) ** 2) / 0.02) + 0.5 * Math.sin(8 * x) ** 2;
		}
	}
	for (let c = 0; c < 200; c++) data[c] = -9999; // a nodata strip along the top edge
	const geo = geographic
		? { tiepoint: [0, 0, 0, 15.0, 48.4, 0], pixelScale: [0.0001, 0.0001, 0], geoKeys: [[1024, 2], [1025, 1], [2048, 4326]] as Array<[number, number]> }
		: { tiepoint: [0, 0, 0, 480000, 5360000, 0], pixelScale: [10, 10, 0], geoKeys: [[1024, 1], [1025, 1], [3072, 32633]] as Array<[number, number]> };
	const buf = encodeTiff({ width: SIZE, height: SIZE, bands: [data], sampleFormat: 3, bitsPerSample: 32, layout: { kind: 'strips', rowsPerStrip: 16 }, geo, nodata: '-9999' });
	writeFileSync(file, new Uint8Array(buf));
}

/** Child-process side: measure one case and print one JSON line. */
async function measure(file: string, crs: string | undefined): Promise<void> {
	const mb = (b: number) => Math.round(b / 1048576);
	const t0 = performance.now();
	const bytes = readFileSync(file);
	const buffer = (bytes.byteOffset === 0 && bytes.byteLength === bytes.buffer.byteLength ? bytes.buffer : bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength)) as ArrayBuffer;
	const raster = await readGeoTiff(buffer, { name: file });
	const t1 = performance.now();
	const afterRead = process.memoryUsage();
	const res = buildWorkingGrid(raster, { crs });
	const t2 = performance.now();
	const afterGrid = process.memoryUsage();
	let feasible = 0;
	for (let i = 0; i < res.grid.feasible.length; i++) feasible += res.grid.feasible[i];
	console.log(
		JSON.stringify({
			readMs: Math.round(t1 - t0),
			gridMs: Math.round(t2 - t1),
			totalMs: Math.round(t2 - t0),
			grid: `${res.grid.width}x${res.grid.height} cells of ${res.grid.cellSize} m in ${res.grid.crs}`,
			controlStep: res.controlStep,
			controlError: Number(res.controlError.toExponential(2)),
			feasibleShare: Number((feasible / res.grid.feasible.length).toFixed(4)),
			rssAfterReadMB: mb(afterRead.rss),
			rssAfterGridMB: mb(afterGrid.rss),
			arrayBuffersAfterGridMB: mb(afterGrid.arrayBuffers),
			peakRssMB: Math.round(process.resourceUsage().maxRSS / 1024)
		})
	);
}

export async function run(_args: string[]): Promise<void> {
	const geoFile = join(tmpdir(), `cairnfield-bench-${SIZE}-wgs84.tif`);
	const utmFile = join(tmpdir(), `cairnfield-bench-${SIZE}-utm33.tif`);
	const g0 = performance.now();
	generate(geoFile, true);
	generate(utmFile, false);
	console.log(`inputs ready in ${Math.round(performance.now() - g0)} ms (${geoFile}, ${utmFile}; not timed below)`);
	const cases: Case[] = [
		{ name: 'wgs84→utm', file: geoFile },
		{ name: 'utm→utm', file: utmFile },
		{ name: 'utm→laea', file: utmFile, crs: 'EPSG:3035' }
	];
	const self = fileURLToPath(import.meta.url);
	for (const c of cases) {
		const child = spawnSync(process.execPath, ['--import', 'tsx', self], {
			env: { ...process.env, CAIRNFIELD_INGEST_FILE: c.file, CAIRNFIELD_INGEST_CRS: c.crs ?? '' },
			encoding: 'utf8'
		});
		const line = child.stdout.trim().split('\n').pop() ?? '';
		if (child.status !== 0 || !line.startsWith('{')) {
			console.log(`${c.name}: failed (${child.stderr.trim().split('\n')[0]})`);
			continue;
		}
		const r = JSON.parse(line);
		console.log(
			`${c.name.padEnd(10)} read ${String(r.readMs).padStart(5)} ms  grid ${String(r.gridMs).padStart(5)} ms  total ${String(r.totalMs).padStart(5)} ms  ` +
				`peak RSS ${r.peakRssMB} MB (after grid ${r.rssAfterGridMB} MB, arrayBuffers ${r.arrayBuffersAfterGridMB} MB)  ` +
				`${r.grid}, lattice step ${r.controlStep} (error ${r.controlError} cell), feasible ${r.feasibleShare}`
		);
	}
}

if (process.env.CAIRNFIELD_INGEST_FILE) {
	await measure(process.env.CAIRNFIELD_INGEST_FILE, process.env.CAIRNFIELD_INGEST_CRS || undefined);
}
