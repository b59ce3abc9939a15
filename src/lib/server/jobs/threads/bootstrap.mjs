// A pool thread: loads the TypeScript tasks through tsx, then runs one task per message.
import { createRequire } from 'node:module';
import os from 'node:os';
import { register } from 'tsx/esm/api';

// geotiff's `web-worker` shim, loaded in a worker thread, reads `workerData.mod` to decide whether
// it is one of its own workers; piscina leaves workerData undefined, which makes the shim throw.
// An empty object tells it "not one of mine".
const threads = createRequire(import.meta.url)('node:worker_threads');
if (threads.workerData === undefined || threads.workerData === null) threads.workerData = {};

// JOBS_THREAD_NICE (set by the worker process, default 19): this thread's own scheduling priority.
// On Linux setpriority(0) changes the calling thread only, so the worker's own thread (leases,
// progress) keeps JOBS_NICE while the computing threads give way to everything else, an app server's
// requests first.
const nice = Number(process.env.JOBS_THREAD_NICE);
if (Number.isInteger(nice) && nice > 0) {
	try {
		os.setPriority(0, Math.min(19, nice));
	} catch {
		// Not permitted here: keep the inherited priority.
	}
}

register();
const tasks = await import('./tasks.ts');

export default async function run({ task, input }) {
	const fn = tasks[task];
	if (typeof fn !== 'function') throw new Error(`no thread task called ${task}`);
	return fn(input);
}
