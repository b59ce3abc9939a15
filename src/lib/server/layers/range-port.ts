/**
 * Byte ranges of a stored object across a thread boundary: the thread that holds the object store
 * answers `{ type: 'read', id, offset, length }` with `{ id, bytes }` (serveRanges); the thread that
 * decodes reads through portRangeReader. Only the ranges asked for cross, never the whole file.
 */
import type { MessagePort } from 'node:worker_threads';
import type { ByteRangeReader } from '../../geo/geotiff';

export interface RangeRequest {
	type: 'read';
	id: number;
	offset: number;
	length: number;
}

/** A reader that asks `port` for each range. */
export function portRangeReader(port: Pick<MessagePort, 'on' | 'postMessage'>): ByteRangeReader {
	const pending = new Map<number, { resolve: (b: Uint8Array) => void; reject: (e: Error) => void }>();
	let next = 0;
	port.on('message', (msg: { id?: number; bytes?: Uint8Array; error?: string }) => {
		if (typeof msg?.id !== 'number') return;
		const p = pending.get(msg.id);
		pending.delete(msg.id);
		if (!p) return;
		if (msg.bytes) p.resolve(msg.bytes);
		else p.reject(new Error(msg.error ?? 'the stored file could not be read'));
	});
	return {
		read: (offset, length) =>
			new Promise<Uint8Array>((resolve, reject) => {
				const id = next++;
				pending.set(id, { resolve, reject });
				port.postMessage({ type: 'read', id, offset, length } satisfies RangeRequest);
			})
	};
}

/** Answers `port`'s range requests from `reader`; returns a function that stops answering. */
export function serveRanges(port: MessagePort, reader: ByteRangeReader): () => void {
	let open = true;
	port.on('message', (msg: RangeRequest) => {
		if (msg?.type !== 'read') return;
		reader.read(msg.offset, msg.length).then(
			(bytes) => {
				if (!open) return;
				const copy = bytes.slice();
				port.postMessage({ id: msg.id, bytes: copy }, [copy.buffer]);
			},
			(err: unknown) => {
				if (open) port.postMessage({ id: msg.id, error: err instanceof Error ? err.message : String(err) });
			}
		);
	});
	return () => {
		open = false;
		port.close();
	};
}
