/**
 * The job side of the CPU work that runs in pool threads: a channel whose far end reads the
 * object store (storage/store-port.ts), the thread's refusals turned back into ServiceErrors, and
 * the SurfaceRunner that importance surfaces and recipe previews are computed with inside jobs.
 * The worker's own thread only reads the database, serves the store and stores the results.
 */
import { MessageChannel, type MessagePort } from 'node:worker_threads';
import { serveObjectStore } from '../../storage/store-port';
import { ServiceError } from '../../services/errors';
import type { EncodedSurface, RecipePreview, SurfaceRunner } from '../../services/importance';
import type { JobContext } from '../registry';
import type { ThreadRefusal } from '../threads/tasks';

type Reply<T> = { ok: true; value: T } | ThreadRefusal;

/**
 * Runs thread task `task` with `input` plus a `port` onto `store`, in the job's pool (its memory
 * limit and its signal); `transfer` lists what else of `input` moves to the thread (ports). A
 * refusal comes back as the ServiceError it was.
 */
export async function runWithStore<T>(ctx: Pick<JobContext, 'runInThread' | 'signal' | 'store'>, task: string, input: Record<string, unknown>, transfer: Transferable[] = []): Promise<T> {
	const channel = new MessageChannel();
	const stop = serveObjectStore(channel.port1, ctx.store);
	try {
		const reply = await ctx.runInThread<Reply<T>>(task, { ...input, port: channel.port2 satisfies MessagePort }, { transferList: [channel.port2, ...transfer], signal: ctx.signal });
		if (!reply.ok) throw new ServiceError(reply.status as ServiceError['status'], reply.code, reply.message, reply.field);
		return reply.value;
	} finally {
		stop();
	}
}

/** Importance surfaces and previews computed in the job's pool thread. */
export function threadSurfaceRunner(ctx: Pick<JobContext, 'runInThread' | 'signal' | 'store'>): SurfaceRunner {
	return {
		surface: (recipe, layers) => runWithStore<EncodedSurface>(ctx, 'importanceSurface', { recipe, layers: [...layers], what: 'surface' }),
		preview: async (recipe, layers) => {
			const p = await runWithStore<RecipePreview>(ctx, 'importanceSurface', { recipe, layers: [...layers], what: 'preview' });
			// A Buffer crosses between threads as a plain Uint8Array.
			return { ...p, png: Buffer.from(p.png.buffer, p.png.byteOffset, p.png.byteLength) };
		}
	};
}


/** Heap limit of the pool threads that compute importance surfaces, previews, zones and map images. */
export const IMPORTANCE_MEMORY_MB = Number(process.env.JOBS_IMPORTANCE_MEMORY_MB ?? 1024);
