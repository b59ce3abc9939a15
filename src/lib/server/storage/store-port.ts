/**
 * Reading the object store across a thread boundary: a pool thread that computes (an importance
 * surface from its layers, a map image from a stored surface) reads through `portObjectStore(port)`;
 * the job's side answers from the real store with `serveObjectStore(port, store)`. Only what the
 * thread asks for crosses: byte ranges of an opened object (rasters, tile by tile) or a whole
 * object (a stored surface). Errors come back as their message. Read-only by design: the thread
 * computes, the job's side stores.
 */
import type { MessagePort } from 'node:worker_threads';
import type { ObjectStore, RangeReader } from './object-store';

export type ReadableStore = Pick<ObjectStore, 'getBuffer' | 'openRanges'>;

type Request =
	| { type: 'get'; id: number; key: string }
	| { type: 'open'; id: number; key: string }
	| { type: 'read'; id: number; handle: number; offset: number; length: number }
	| { type: 'close'; id: number; handle: number };

/** A request before its id is given. */
type Unnumbered<T> = T extends unknown ? Omit<T, 'id'> : never;

type Reply = { id: number; bytes?: Uint8Array; handle?: number; error?: string };

/** Answers `port`'s requests from `store`; returns a function that stops answering and closes what is open. */
export function serveObjectStore(port: MessagePort, store: ReadableStore): () => void {
	let open = true;
	let nextHandle = 1;
	const readers = new Map<number, RangeReader>();
	const reply = (msg: Reply, transfer: ArrayBuffer[] = []) => {
		if (open) port.postMessage(msg, transfer);
	};
	const fail = (id: number) => (err: unknown) => reply({ id, error: err instanceof Error ? err.message : String(err) });
	port.on('message', (msg: Request) => {
		switch (msg?.type) {
			case 'get':
				store.getBuffer(msg.key).then((b) => {
					const copy = new Uint8Array(b); // a copy of its own, so it can be transferred
					reply({ id: msg.id, bytes: copy }, [copy.buffer]);
				}, fail(msg.id));
				return;
			case 'open':
				store.openRanges(msg.key).then((r) => {
					if (!open) return void r.close().catch(() => undefined);
					const handle = nextHandle++;
					readers.set(handle, r);
					reply({ id: msg.id, handle });
				}, fail(msg.id));
				return;
			case 'read': {
				const r = readers.get(msg.handle);
				if (!r) return reply({ id: msg.id, error: 'the stored object is not open' });
				r.read(msg.offset, msg.length).then((bytes) => {
					const copy = bytes.slice();
					reply({ id: msg.id, bytes: copy }, [copy.buffer]);
				}, fail(msg.id));
				return;
			}
			case 'close': {
				const r = readers.get(msg.handle);
				readers.delete(msg.handle);
				(r ? r.close() : Promise.resolve()).then(() => reply({ id: msg.id }), fail(msg.id));
				return;
			}
		}
	});
	return () => {
		open = false;
		for (const r of readers.values()) r.close().catch(() => undefined);
		readers.clear();
		port.close();
	};
}

/** The store as a thread sees it: every call is a request over `port`. */
export function portObjectStore(port: Pick<MessagePort, 'on' | 'postMessage'>): ReadableStore {
	const pending = new Map<number, { resolve: (r: Reply) => void; reject: (e: Error) => void }>();
	let next = 0;
	port.on('message', (msg: Reply) => {
		if (typeof msg?.id !== 'number') return;
		const p = pending.get(msg.id);
		pending.delete(msg.id);
		if (!p) return;
		if (msg.error !== undefined) p.reject(new Error(msg.error));
		else p.resolve(msg);
	});
	const ask = (req: Unnumbered<Request>): Promise<Reply> =>
		new Promise((resolve, reject) => {
			const id = next++;
			pending.set(id, { resolve, reject });
			port.postMessage({ ...req, id });
		});
	return {
		getBuffer: async (key) => {
			const r = await ask({ type: 'get', key });
			const b = r.bytes!;
			return Buffer.from(b.buffer, b.byteOffset, b.byteLength);
		},
		openRanges: async (key) => {
			const { handle } = await ask({ type: 'open', key });
			return {
				read: async (offset, length) => (await ask({ type: 'read', handle: handle!, offset, length })).bytes!,
				close: async () => void (await ask({ type: 'close', handle: handle! }))
			};
		}
	};
}
