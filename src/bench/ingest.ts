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
 * Each runs as its own process under /usr/bin/time, which reports the wall time of the whole
 * command (Node's or GDAL's start-up included) and its peak resident memory (maximum RSS). Each
 * runs --repeats=N times (default 3), the three in turn, so that load from other work on the
 * machine falls on all alike; the median time, the largest peak, every run's time and the load
 * average before and after each size are printed. Ratios: CLI time / gdalwarp time, CLI peak /
 * raw sample bytes.
 *
 * Then the web part (src/bench/ingest-upload.ts): the largest file is uploaded over HTTP to the
 * app started by `npm start`'s own entry (built app, MariaDB, one job worker, demo data), signed in
 * as the demo analyst, through POST /api/v1/networks/{id}/layers as the upload form sends it; the
 * layer-processing job is followed to its end, and the app's and the worker's resident memory are
 * sampled from /proc.
 *
 * `npm run bench ingest` (all sizes), `npm run bench ingest -- --sizes=2000,4000` (some),
 * `--repeats=5`, `--no-web` (no upload), `--web-only` (only the upload).
 * Prints figures; never fails on speed.
 *
 * Figures on the shared 2-core machine, 2026-12-02, 3 repeats each, load average 13–17 (four other
 * sessions building and testing; gdalwarp took 3–8 s for 2000² here against 0.28 s on a quiet
 * machine, so compare the ratios, not the seconds):
 *   pixels  raw MB | cli s  peak MB  ×raw | gdal near s  peak MB | gdal avg s  peak MB | ratio near  avg
 *   2000²      15  |  9.35      90   5.9  |     7.38        95   |    5.78        83   |      1.27  1.62
 *   4000²      61  |  7.21      84   1.4  |    11.85       202   |    5.59       145   |      0.61  1.29
 *   6000²     137  |  3.39      84   0.61 |    10.59       350   |    8.04       226   |      0.32  0.42
 *   10000²    381  |  9.09      92   0.24 |    37.66       861   |   33.41       484   |      0.24  0.27
 *   grids: 783×1172 … 821×1214 cells of 19 … 92 m (the one-million-cell budget decides).
 *   At load 10–12, five repeats of 2000²: cli 1.56 s (runs 1.33–1.62), gdal near 0.79 s (0.53–1.36):
 *   ratio 1.97; after the 0-iteration change at load 12: cli 2.17 s, gdal near 1.43 s: ratio 1.52.
 * Web, 10000² (381 MB) over HTTP, load average 13 → 21: 202 after 29.3 s (the body streamed to the
 *   store), the layer-processing job finished 73.9 s later (103 s in all); peak RSS app 153 MB
 *   (114 before), worker 290 MB (146 before), both together 432 MB: under the 1.5 GB goal.
 * What the 2000² run spends its time on: Node's start (~0.1 s CPU), the bundle's load (~0.1 s), the
 * aggregation of 4 M pixels (8 M sub-pixels), and fresh memory: this machine takes ~14 µs to fault
 * in a 4 KiB page, so every 24 MB first touched costs ~80 ms; hence reused block buffers, direct
 * strip reads, and no per-cell table that a 0-iteration run does not need.
 * Earlier figures (before this round): 2000² 0.78 s / 137 MB against 0.28 s (ratio 2.79), and before
 * the streaming ingest: 2000² 1.9 s / 347 MB, 4000² 4.1 s / 1021 MB, 6000² 10.8 s / 2148 MB.
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
