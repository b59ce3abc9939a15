/**
 * Ingest benchmark: the command line against GDAL's gdalwarp on the same files.
 *
 * Inputs: geographic (EPSG:4326) Float32 GeoTIFFs of 2000², 4000², 6000² and 10000² pixels of
 * 0.0001° from 15.0° E 48.4° N (strips of 16 rows, nodata -9999 along the top rows), written once
 * into data/bench/ (git-ignored) and never timed. For each size, one after another:
 *   cli          `cairnfield place --importance F --count 1 --radius 150 --max-iterations 0`
 *                (reads, reprojects to UTM 33N and aggregates into the working grid)
 *   gdal near    `gdalwarp -t_srs EPSG:32633 -r near` at full resolution, one thread (the
 *                reference the figures were first measured against)
 *   gdal average `gdalwarp -t_srs EPSG:32633 -r average` onto the CLI's own working grid (the same
 *                output: -te and -tr of the CLI's grid)
 * Each runs as its own process under /usr/bin/time, which reports wall time and peak resident
 * memory (maximum RSS). Ratios: CLI time / gdalwarp time, CLI peak / raw sample bytes.
 *
 * Then the web part: the 10000² file goes through the layer service's processing from storage
 * (processStoredLayer: statistics, histogram, preview in one streamed pass over a file store) in a
 * process of its own, with the same figures.
 *
 * `npm run bench ingest` (all sizes), `npm run bench ingest -- --sizes=2000,4000` (some).
 * Prints figures; never fails on speed.
 *
 * Figures on the shared 2-core machine, 2026-12-02, load average 7–9 (other builds running; an
 * earlier run at load 15–18 was 2–3× slower on both sides):
 *   pixels  raw MB | cli s  peak MB  ×raw | gdal near s  peak MB | gdal avg s  peak MB | ratio near  avg
 *   2000²      15  |  0.78     137   9.0  |     0.28        95   |    0.19        84   |      2.79  4.11
 *   4000²      61  |  2.10     181   3.0  |     1.09       202   |    0.80       145   |      1.93  2.63
 *   6000²     137  |  2.07     190   1.4  |     2.45       349   |    2.12       226   |      0.84  0.98
 *   10000²    381  |  5.34     153   0.40 |     9.45       861   |    4.24       485   |      0.57  1.26
 *   grids: 783×1172 … 821×1214 cells of 19 … 92 m (the one-million-cell budget decides).
 *   web, 10000²: stored in 2.31 s, processed from storage in 6.46 s (worker thread), whole process
 *   9.99 s, peak 235 MB (0.61 × raw).
 * Before the streaming ingest (same machine): 2000² 1.9 s / 347 MB, 4000² 4.1 s / 1021 MB,
 * 6000² 10.8 s / 2148 MB. The CLI's time includes Node's start and the engine's own set-up on the
 * grid (prefix sums, seeding: about 0.3 s at a million cells), which is what keeps 2000² above 2×.
 */
import { spawnSync } from 'node:child_process';
import { createWriteStream, existsSync, mkdirSync, readFileSync, renameSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { encodeTiffHeader } from './support/tiff-writer';

const ROOT = resolve(fileURLToPath(new URL('../..', import.meta.url)));
const DIR = join(ROOT, 'data', 'bench');
const ALL_SIZES = [2000, 4000, 6000, 10000];
const RADIUS = 150;

/** The test surface: two smooth bumps on a slope, as the Lloyd benchmark uses. */
function value(x: number, y: number): number {
	return 0.2 + Math.exp(-((x - 0.3) ** 2 + (y - 0.6) ** 2) / 0.02) + 0.5 * Math.sin(8 * x) ** 2;
}

/** Write the file strip by strip (never the whole raster in memory). */
async function generate(size: number): Promise<string> {
	const file = join(DIR, `geo-${size}.tif`);
	if (existsSync(file)) return file;
	mkdirSync(DIR, { recursive: true });
	const rowsPerStrip = 16;
	const header = encodeTiffHeader({
		width: size,
		height: size,
		sampleFormat: 3,
		bitsPerSample: 32,
		rowsPerStrip,
		geo: { tiepoint: [0, 0, 0, 15.0, 48.4, 0], pixelScale: [0.0001, 0.0001, 0], geoKeys: [[1024, 2], [1025, 1], [2048, 4326]] },
		nodata: '-9999'
	});
	const tmp = `${file}.part`;
	const out = createWriteStream(tmp);
	let failed: Error | null = null;
	out.on('error', (e) => (failed = e));
	const write = (b: Uint8Array) =>
		new Promise<void>((ok, fail) => {
			if (failed) return fail(failed);
			if (out.write(b)) ok();
			else out.once('drain', ok);
		});
	await write(header);
	const strip = new Float32Array(size * rowsPerStrip);
	for (let r0 = 0; r0 < size; r0 += rowsPerStrip) {
		const rows = Math.min(rowsPerStrip, size - r0);
		for (let r = 0; r < rows; r++) {
			const y = (r0 + r) / size;
			for (let c = 0; c < size; c++) strip[r * size + c] = r0 + r < 8 ? -9999 : value(c / size, y);
		}
		await write(new Uint8Array(strip.buffer, 0, rows * size * 4).slice());
	}
	await new Promise<void>((ok) => out.end(ok));
	renameSync(tmp, file);
	return file;
}

interface Measured {
	ok: boolean;
	seconds: number;
	peakMB: number;
	stdout: string;
	error: string;
}

/** Run a command under /usr/bin/time: wall seconds of the whole command and its peak RSS. */
function timed(cmd: string, args: string[], env: NodeJS.ProcessEnv = process.env): Measured {
	const r = spawnSync('/usr/bin/time', ['-f', '@@time %e %M', cmd, ...args], { encoding: 'utf8', env, maxBuffer: 1 << 28 });
	const m = /@@time ([\d.]+) (\d+)/.exec(r.stderr ?? '');
	const error = (r.stderr ?? '').replace(/@@time.*\n?/, '').trim().split('\n').pop() ?? '';
	return { ok: r.status === 0 && m !== null, seconds: m ? Number(m[1]) : NaN, peakMB: m ? Number(m[2]) / 1024 : NaN, stdout: r.stdout ?? '', error };
}

const f1 = (v: number) => (Number.isFinite(v) ? v.toFixed(2) : '–');
const f0 = (v: number) => (Number.isFinite(v) ? v.toFixed(0) : '–');

function median(values: number[]): number {
	const v = values.filter(Number.isFinite).sort((a, b) => a - b);
	if (v.length === 0) return NaN;
	const m = v.length >> 1;
	return v.length % 2 ? v[m] : (v[m - 1] + v[m]) / 2;
}

/** The 1-, 5- and 15-minute load averages: the machine is shared, so every figure carries them. */
function loadAverage(): string {
	try {
		return readFileSync('/proc/loadavg', 'utf8').split(' ').slice(0, 3).join(' ');
	} catch {
		return '?';
	}
}

function hasGdal(): boolean {
	return spawnSync('gdalwarp', ['--version'], { encoding: 'utf8' }).status === 0;
}

/** Several runs of one command: median wall time, the largest peak RSS, and every run's time. */
interface Runs {
	runs: Measured[];
	seconds: number;
	peakMB: number;
}

function summary(runs: Measured[]): Runs {
	return { runs, seconds: median(runs.map((r) => r.seconds)), peakMB: Math.max(...runs.map((r) => r.peakMB)) };
}

export async function run(args: string[]): Promise<void> {
	const sizesArg = args.find((a) => a.startsWith('--sizes='))?.slice(8);
	const sizes = sizesArg ? sizesArg.split(',').map(Number).filter((n) => n > 0) : ALL_SIZES;
	const repeats = Math.max(1, Number(args.find((a) => a.startsWith('--repeats='))?.slice(10) ?? 3) || 3);
	const web = !args.includes('--no-web');
	const cliPart = !args.includes('--web-only');
	const gdal = hasGdal();
	if (!gdal) console.log('gdalwarp not found (Debian: apt-get install gdal-bin); GDAL columns are left empty');
	const t0 = performance.now();
	const files = new Map<number, string>();
	for (const s of sizes) files.set(s, await generate(s));
	console.log(`inputs in ${DIR} ready in ${((performance.now() - t0) / 1000).toFixed(1)} s (not timed below)`);
	const out = join(tmpdir(), `cairnfield-bench-${process.pid}`);
	mkdirSync(out, { recursive: true });
	const cli = join(ROOT, 'src', 'cli', 'bin.js');
	// Bring the command line's bundle up to date before anything is timed.
	spawnSync(process.execPath, [cli, '--help'], { encoding: 'utf8' });
	console.log(`each command runs ${repeats} times, the three in turn (cli, gdal near, gdal avg), so that load from other work falls on all alike;`);
	console.log('time: median wall time of the whole command (Node or GDAL start-up included); peak: the largest maximum RSS of the runs');
	console.log('pixels   raw MB | cli s  peak MB  ×raw | gdal near s  peak MB | gdal avg s  peak MB | time ratio near  avg | load average | grid');
	try {
		for (const size of cliPart ? sizes : []) {
			const file = files.get(size)!;
			const raw = (size * size * 4) / 1048576;
			const loadBefore = loadAverage();
			const cliRuns: Measured[] = [];
			const nearRuns: Measured[] = [];
			const avgRuns: Measured[] = [];
			let grid = '';
			let te: string[] = [];
			let tr = '';
			for (let rep = 0; rep < repeats; rep++) {
				const c = timed(process.execPath, [cli, 'place', '--importance', file, '--count', '1', '--radius', String(RADIUS), '--max-iterations', '0', '--out', join(out, 'sites.geojson')]);
				cliRuns.push(c);
				if (c.ok && !tr) {
					const p = JSON.parse(readFileSync(join(out, 'sites.geojson'), 'utf8')).placement;
					grid = `${p.grid.width}×${p.grid.height} cells of ${p.cell_size_m} m (${p.cell_size.rule})`;
					tr = String(p.cell_size_m);
					te = [String(p.grid.x0), String(p.grid.y0 - p.grid.height * p.cell_size_m), String(p.grid.x0 + p.grid.width * p.cell_size_m), String(p.grid.y0)];
				} else if (!c.ok) grid = `cli failed: ${c.error}`;
				if (gdal) nearRuns.push(timed('gdalwarp', ['-q', '-overwrite', '-t_srs', 'EPSG:32633', '-r', 'near', '-wo', 'NUM_THREADS=1', file, join(out, 'near.tif')]));
				if (gdal && tr) avgRuns.push(timed('gdalwarp', ['-q', '-overwrite', '-t_srs', 'EPSG:32633', '-r', 'average', '-tr', tr, tr, '-te', ...te, '-wo', 'NUM_THREADS=1', file, join(out, 'avg.tif')]));
				rmSync(join(out, 'near.tif'), { force: true });
			}
			const c = summary(cliRuns);
			const near = summary(nearRuns);
			const avg = summary(avgRuns);
			console.log(
				`${`${size}²`.padEnd(8)} ${f0(raw).padStart(6)} | ${f1(c.seconds).padStart(5)} ${f0(c.peakMB).padStart(8)} ${f1(c.peakMB / raw).padStart(5)} | ` +
					`${f1(near.seconds).padStart(11)} ${f0(near.peakMB).padStart(8)} | ${f1(avg.seconds).padStart(10)} ${f0(avg.peakMB).padStart(8)} | ` +
					`${f1(c.seconds / near.seconds).padStart(15)} ${f1(c.seconds / avg.seconds).padStart(4)} | ${loadBefore} → ${loadAverage()} | ${grid}`
			);
			const list = (r: Measured[]) => r.map((m) => f1(m.seconds)).join(' ');
			console.log(`         runs (s): cli ${list(cliRuns)} | gdal near ${list(nearRuns)} | gdal avg ${list(avgRuns)}`);
		}
		if (web) {
			const big = Math.max(...sizes);
			const raw = (big * big * 4) / 1048576;
			console.log(`web upload of the ${big}² file (${f0(statSync(files.get(big)!).size / 1048576)} MB, raw samples ${f0(raw)} MB), load average ${loadAverage()}:`);
			try {
				const { webUpload } = await import('./ingest-upload');
				for (const line of await webUpload(ROOT, files.get(big)!)) console.log(`  ${line}`);
				console.log(`  load average after: ${loadAverage()}`);
			} catch (e) {
				console.log(`  failed: ${e instanceof Error ? e.message : String(e)}`);
			}
		}
	} finally {
		rmSync(out, { recursive: true, force: true });
	}
}
