// A pool thread: loads the TypeScript tasks through tsx, then runs one task per message.
import { createRequire } from 'node:module';
import { register } from 'tsx/esm/api';

// geotiff's `web-worker` shim, loaded in a worker thread, reads `workerData.mod` to decide whether
// it is one of its own workers; piscina leaves workerData undefined, which makes the shim throw.
// An empty object tells it "not one of mine".
const threads = createRequire(import.meta.url)('node:worker_threads');
if (threads.workerData === undefined || threads.workerData === null) threads.workerData = {};

register();
const tasks = await import('./tasks.ts');

export default async function run({ task, input }) {
	const fn = tasks[task];
	if (typeof fn !== 'function') throw new Error(`no thread task called ${task}`);
	return fn(input);
}
