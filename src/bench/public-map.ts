/**
 * `npm run bench public-map`: many anonymous GETs of the demo's public map against a running,
 * built app (`npm start`, or any deployment), and the figures: requests per second, p50 and p99 of
 * the answer time, and the machine's load average before and after. Two paths, in turn:
 *   /map/vennarrow-vale                      the server-rendered page (HTML)
 *   /api/v1/public/networks/vennarrow-vale   the same data as JSON
 * Requests go from a small loop of concurrent fetches in this process (no load generator is
 * installed); each answer's body is read to the end. Options: --url=http://127.0.0.1:3000 (default
 * $BASE_URL, else that), --slug=vennarrow-vale, --requests=400 (per path), --concurrency=8,
 * --warmup=20. Printed, never asserted.
 *
 * Figures on the shared 2-core build machine, 2026-12-02, `npm start` with the demo data (other
 * developers' builds and tests running beside it: load average 12–15; the app, MariaDB, its job
 * worker and this loop all on the same 2 cores), 400 requests per path, 8 at once, after 20:
 *                                   built per request (before)      built once per change (cachedPublicMap)
 *                                   req/s   p50 / p99 ms            run 1: req/s  p50 / p99 ms   run 2: req/s  p50 / p99 ms
 *   /map/vennarrow-vale             16.8    356.3 / 1845.2          70.3   87.1 / 389.0          30.5   227.0 / 933.8
 *   /api/v1/public/networks/…       36.0    148.0 / 996.5           104.8  64.7 / 260.6          54.9   123.6 / 438.9
 * The load of the machine moves these figures by a factor of two between runs; the cache took the
 * page from about 17 to 30–70 requests/s and the JSON from 36 to 55–105.
 */
import os from 'node:os';

interface Figures {
	requests: number;
	failed: number;
	seconds: number;
	latencies: number[];
	bytes: number;
}

function option(args: string[], name: string, fallback: string): string {
	const a = args.find((x) => x.startsWith(`--${name}=`));
	return a ? a.slice(name.length + 3) : fallback;
}

function quantile(sorted: number[], q: number): number {
	if (sorted.length === 0) return NaN;
	return sorted[Math.min(sorted.length - 1, Math.max(0, Math.ceil(q * sorted.length) - 1))];
}

const load = () => os.loadavg().map((v) => v.toFixed(2)).join(' / ');

/** `total` GETs of `url`, `concurrency` at a time; every answer read to its end. */
async function hammer(url: string, total: number, concurrency: number): Promise<Figures> {
	const latencies: number[] = [];
	let next = 0;
	let failed = 0;
	let bytes = 0;
	const started = performance.now();
	const lane = async () => {
		while (next < total) {
			next++;
			const t0 = performance.now();
			try {
				const res = await fetch(url, { redirect: 'manual' });
				const body = await res.arrayBuffer();
				bytes += body.byteLength;
				if (res.status !== 200) failed++;
			} catch {
				failed++;
			}
			latencies.push(performance.now() - t0);
		}
	};
	await Promise.all(Array.from({ length: concurrency }, lane));
	return { requests: total, failed, seconds: (performance.now() - started) / 1000, latencies: latencies.sort((a, b) => a - b), bytes };
}

export async function run(args: string[]): Promise<void> {
	const base = option(args, 'url', process.env.BASE_URL ?? 'http://127.0.0.1:3000').replace(/\/$/, '');
	const slug = option(args, 'slug', 'vennarrow-vale');
	const total = Number(option(args, 'requests', '400'));
	const concurrency = Number(option(args, 'concurrency', '8'));
	const warmup = Number(option(args, 'warmup', '20'));
	const paths = [`/map/${slug}`, `/api/v1/public/networks/${slug}`];

	try {
		const probe = await fetch(`${base}${paths[1]}`);
		if (probe.status !== 200) throw new Error(`${paths[1]} answered ${probe.status}: is the demo network published?`);
		await probe.arrayBuffer();
	} catch (e) {
		console.error(`Cannot reach the app at ${base} (${e instanceof Error ? e.message : e}).`);
		console.error('Start the built app with the demo data first (`npm start`), or pass --url=http://host:port.');
		process.exitCode = 1;
		return;
	}

	console.log(`app ${base}, ${total} requests per path, ${concurrency} at once, ${warmup} to warm up; ${os.cpus().length} CPUs`);
	console.log('path                                              req/s     p50 ms    p99 ms   max ms   KiB/answer  failed   load avg (1/5/15 min) before → after');
	for (const p of paths) {
		await hammer(`${base}${p}`, warmup, Math.min(concurrency, warmup || 1));
		const before = load();
		const f = await hammer(`${base}${p}`, total, concurrency);
		const after = load();
		console.log(
			[
				p.padEnd(48),
				(f.requests / f.seconds).toFixed(1).padStart(7),
				quantile(f.latencies, 0.5).toFixed(1).padStart(10),
				quantile(f.latencies, 0.99).toFixed(1).padStart(9),
				f.latencies.at(-1)!.toFixed(1).padStart(8),
				(f.bytes / f.requests / 1024).toFixed(1).padStart(12),
				String(f.failed).padStart(7),
				`   ${before} → ${after}`
			].join('')
		);
	}
}
