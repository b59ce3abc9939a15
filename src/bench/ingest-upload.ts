/**
 * The web part of `npm run bench ingest`: a GeoTIFF uploaded through the running app over HTTP,
 * as the browser's upload form does it, and processed by the job worker.
 *
 * 1. `npm start`'s own entry (src/ops/start.ts) starts MariaDB, the built app (src/ops/serve.mjs)
 *    and one job worker (src/ops/worker.ts) on free ports, with the demo data (the app is built
 *    first when its sources changed; none of that is timed). Its MariaDB and stored objects live
 *    under data/ as for `npm start`, so do not run both in the same checkout at once.
 * 2. The demo analyst signs in through the sign-in form (POST /signin?/password), and the file is
 *    streamed as the body of POST /api/v1/networks/{id}/layers, the request UploadForm.svelte sends;
 *    the answer (202) names the layer-processing job, followed through GET …/jobs/{jobId} every
 *    250 ms until it ends.
 * 3. Memory: the app's and the worker's VmRSS (/proc/PID/status) sampled every 50 ms from the
 *    upload's start to the job's end, and their VmHWM (peak resident size over the process's life)
 *    at the end. The layer is deleted afterwards and everything is stopped.
 *
 * Returns the lines to print; throws when a step fails.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { createReadStream, readdirSync, readFileSync, statSync } from 'node:fs';
import { createServer } from 'node:net';
import { basename, join } from 'node:path';
import { Readable } from 'node:stream';
import { DEMO_NETWORK, DEMO_USERS } from '../../seeds/demo';

const READY_TIMEOUT_MS = 20 * 60_000; // a first `vite build` on a busy 2-core machine takes minutes
const JOB_TIMEOUT_MS = 15 * 60_000;

function freePort(): Promise<number> {
	return new Promise((resolve, reject) => {
		const s = createServer();
		s.once('error', reject);
		s.listen(0, '127.0.0.1', () => {
			const { port } = s.address() as { port: number };
			s.close(() => resolve(port));
		});
	});
}

/** One field of /proc/PID/status in MB (VmRSS, VmHWM); NaN when the process is gone. */
function statusMB(pid: number, field: 'VmRSS' | 'VmHWM'): number {
	try {
		const m = new RegExp(`^${field}:\\s+(\\d+) kB`, 'm').exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
		return m ? Number(m[1]) / 1024 : NaN;
	} catch {
		return NaN;
	}
}

/** Descendants of `root` whose command line contains `needle` (the app and the worker). */
function descendantWith(root: number, needle: string): number | null {
	const parent = new Map<number, number>();
	const cmd = new Map<number, string>();
	for (const d of readdirSync('/proc')) {
		if (!/^\d+$/.test(d)) continue;
		try {
			const stat = readFileSync(`/proc/${d}/stat`, 'utf8');
			parent.set(Number(d), Number(stat.slice(stat.lastIndexOf(')') + 2).split(' ')[1]));
			cmd.set(Number(d), readFileSync(`/proc/${d}/cmdline`, 'utf8').replace(/\0/g, ' '));
		} catch {
			// the process ended while we looked
		}
	}
	for (const [pid, line] of cmd) {
		if (!line.includes(needle)) continue;
		for (let p: number | undefined = pid; p && p > 1; p = parent.get(p)) if (p === root) return pid;
	}
	return null;
}

interface Started {
	child: ChildProcess;
	origin: string;
	output: string[];
}

async function startApp(root: string): Promise<Started> {
	const [port, dbPort, smtpPort] = [await freePort(), await freePort(), await freePort()];
	const origin = `http://127.0.0.1:${port}`;
	const env: NodeJS.ProcessEnv = { ...process.env, PORT: String(port), DB_PORT: String(dbPort), SMTP_PORT: String(smtpPort), ORIGIN: origin, SEED_DEMO: 'true' };
	delete env.DATABASE_URL;
	const child = spawn(process.execPath, ['--import', 'tsx', join(root, 'src', 'ops', 'start.ts')], { cwd: root, env, stdio: ['ignore', 'pipe', 'pipe'] });
	const output: string[] = [];
	await new Promise<void>((resolve, reject) => {
		const timer = setTimeout(() => reject(new Error(`the app did not start within ${READY_TIMEOUT_MS / 60_000} minutes`)), READY_TIMEOUT_MS);
		const seen = (chunk: Buffer) => {
			output.push(...chunk.toString().split('\n').filter(Boolean));
			if (output.some((l) => l.includes('Cairnfield is running at'))) {
				clearTimeout(timer);
				resolve();
			}
		};
		child.stdout!.on('data', seen);
		child.stderr!.on('data', seen);
		child.once('exit', (code) => {
			clearTimeout(timer);
			reject(new Error(`npm start's entry exited (${code}) before the app listened: ${output.slice(-3).join(' / ')}`));
		});
	});
	return { child, origin, output };
}

async function stopApp(child: ChildProcess): Promise<void> {
	if (child.exitCode !== null || child.signalCode !== null) return;
	const exited = new Promise((r) => child.once('exit', r));
	child.kill('SIGTERM');
	const t = setTimeout(() => child.kill('SIGKILL'), 30_000);
	await exited;
	clearTimeout(t);
}

/** Signs in through the sign-in form; returns the Cookie header of the session. */
async function signIn(origin: string, email: string, password: string): Promise<string> {
	const res = await fetch(`${origin}/signin?/password`, {
		method: 'POST',
		redirect: 'manual',
		headers: { origin, accept: 'text/html', 'content-type': 'application/x-www-form-urlencoded' },
		body: new URLSearchParams({ providerId: 'password', email, password, redirectTo: '/networks' })
	});
	const cookies = res.headers.getSetCookie().map((c) => c.split(';')[0]);
	if (![302, 303].includes(res.status) || !cookies.some((c) => c.includes('session-token'))) {
		throw new Error(`signing in as ${email} failed (HTTP ${res.status})`);
	}
	return cookies.join('; ');
}

async function api<T>(origin: string, cookie: string, method: string, path: string): Promise<T> {
	const res = await fetch(`${origin}/api/v1${path}`, { method, headers: { cookie, origin, accept: 'application/json' } });
	if (!res.ok) throw new Error(`${method} ${path}: HTTP ${res.status} ${await res.text()}`);
	return (res.status === 204 ? null : await res.json()) as T;
}

const mb = (v: number) => (Number.isFinite(v) ? v.toFixed(0) : '–');
const s2 = (ms: number) => (ms / 1000).toFixed(2);

export async function webUpload(root: string, file: string): Promise<string[]> {
	const app = await startApp(root);
	try {
		const { origin } = app;
		const appPid = descendantWith(app.child.pid!, 'serve.mjs');
		const workerPid = descendantWith(app.child.pid!, join('src', 'ops', 'worker.ts'));
		if (!appPid || !workerPid) throw new Error('the app or the worker process was not found');
		const analyst = DEMO_USERS.find((u) => u.role === 'analyst')!;
		const cookie = await signIn(origin, analyst.email, analyst.password);
		const { networks } = await api<{ networks: { id: number; slug?: string; name: string }[] }>(origin, cookie, 'GET', '/networks');
		const network = networks.find((n) => n.slug === DEMO_NETWORK.slug || n.name === DEMO_NETWORK.name) ?? networks[0];
		if (!network) throw new Error('the demo analyst sees no network');
		const before = { app: statusMB(appPid, 'VmRSS'), worker: statusMB(workerPid, 'VmRSS') };

		// Resident memory of both processes while the upload is stored and processed.
		const peak = { app: 0, worker: 0, sum: 0 };
		const sample = () => {
			const a = statusMB(appPid, 'VmRSS');
			const w = statusMB(workerPid, 'VmRSS');
			if (a > peak.app) peak.app = a;
			if (w > peak.worker) peak.worker = w;
			if (a + w > peak.sum) peak.sum = a + w;
		};
		const sampler = setInterval(sample, 50);
		const size = statSync(file).size;
		const query = new URLSearchParams({ name: `bench ${basename(file)}`, kind: 'other', fileName: basename(file) });
		const t0 = performance.now();
		let t1 = t0;
		let t2 = t0;
		let layerId: number | null = null;
		let job: { id: number; state: string; error?: string | null } | null = null;
		try {
			const res = await fetch(`${origin}/api/v1/networks/${network.id}/layers?${query}`, {
				method: 'POST',
				headers: { cookie, origin, accept: 'application/json', 'content-type': 'application/octet-stream', 'content-length': String(size) },
				body: Readable.toWeb(createReadStream(file, { highWaterMark: 1 << 20 })) as ReadableStream<Uint8Array>,
				duplex: 'half'
			} as RequestInit);
			t1 = performance.now();
			const accepted = (await res.json()) as { layer?: { id: number }; job?: { id: number; state: string }; error?: { message: string } };
			if (res.status !== 202 || !accepted.layer || !accepted.job) throw new Error(`upload: HTTP ${res.status} ${accepted.error?.message ?? ''}`);
			layerId = accepted.layer.id;
			const end = Date.now() + JOB_TIMEOUT_MS;
			for (;;) {
				({ job } = await api<{ job: { id: number; state: string; error?: string | null } }>(origin, cookie, 'GET', `/networks/${network.id}/jobs/${accepted.job.id}`));
				if (!['queued', 'running'].includes(job.state) || Date.now() > end) break;
				await new Promise((r) => setTimeout(r, 250));
			}
			t2 = performance.now();
		} finally {
			clearInterval(sampler);
			sample();
		}
		const hwm = { app: statusMB(appPid, 'VmHWM'), worker: statusMB(workerPid, 'VmHWM') };
		const layer = layerId !== null ? (await api<{ layer: { status: string; width: number | null; height: number | null; stats: { validCount: number; mean: number } | null } }>(origin, cookie, 'GET', `/networks/${network.id}/layers/${layerId}`)).layer : null;
		if (layerId !== null) await api(origin, cookie, 'DELETE', `/networks/${network.id}/layers/${layerId}`).catch(() => undefined);
		if (job?.state !== 'finished') throw new Error(`the layer-processing job ended ${job?.state ?? 'unknown'}: ${job?.error ?? ''}`);
		const dims = layer ? `(layer ${layer.status}: ${layer.width}×${layer.height}, ${layer.stats?.validCount ?? 0} valid, mean ${layer.stats?.mean.toFixed(4) ?? '–'})` : '';
		return [
			`HTTP upload (POST …/layers, ${mb(size / 1048576)} MB streamed) answered 202 in ${s2(t1 - t0)} s; layer-processing job finished ${s2(t2 - t1)} s later; total ${s2(t2 - t0)} s ${dims}`,
			`  peak RSS while uploading and processing (sampled every 50 ms): app ${mb(peak.app)} MB (${mb(before.app)} before), worker ${mb(peak.worker)} MB (${mb(before.worker)} before), both together ${mb(peak.sum)} MB`,
			`  VmHWM (peak over each process's life): app ${mb(hwm.app)} MB, worker ${mb(hwm.worker)} MB`
		];
	} finally {
		await stopApp(app.child);
	}
}
