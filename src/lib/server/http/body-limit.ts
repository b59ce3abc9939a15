/**
 * Request bodies are bounded per route, before anything reads them. Forms and JSON get a small
 * limit; file imports a moderate one; only the raster upload gets the large one (the layer service
 * counts the bytes of that stream itself, against LAYER_MAX_BYTES). Over the limit: 413, and the
 * body is never buffered (a declared Content-Length is refused before a byte is read; a chunked
 * body is read only up to the limit).
 */

export const SMALL_BODY_BYTES = 1024 * 1024;
export const IMPORT_BODY_BYTES = 16 * 1024 * 1024;
/** A field task's photo: resized on the phone it is far smaller, but an unresized camera photo fits. */
export const PHOTO_BODY_BYTES = 8 * 1024 * 1024;
/** Bodies that the route streams itself and bounds on its own (the layer service's LAYER_MAX_BYTES). */
export const STREAMED = Infinity;

/** Route ids (with method) that take more than SMALL_BODY_BYTES. Every other body gets the small limit. */
const LARGER: Record<string, number> = {
	'POST /api/v1/networks/[id=id]/layers': STREAMED,
	'POST /api/v1/networks/[id=id]/sensors': IMPORT_BODY_BYTES,
	'POST /api/v1/networks/[id=id]/zone-sets': IMPORT_BODY_BYTES,
	'POST /api/v1/networks/[id=id]/tasks/[taskId=id]/photos': PHOTO_BODY_BYTES,
	'POST /(app)/networks/[id=id]/sensors': IMPORT_BODY_BYTES,
	'POST /(app)/networks/[id=id]/zones': IMPORT_BODY_BYTES
};

export function bodyLimitFor(routeId: string | null, method: string): number {
	return LARGER[`${method.toUpperCase()} ${routeId}`] ?? SMALL_BODY_BYTES;
}

export type BoundedBody = { ok: true; request: Request } | { ok: false };

/**
 * The request with its body bounded by `limit` bytes, or `{ ok: false }` when it is larger. A
 * declared length is judged without reading; a body without one is read up to `limit` + 1 bytes at
 * most (which is small, since STREAMED routes are not read here); the rest is never read.
 */
export async function boundBody(request: Request, limit: number): Promise<BoundedBody> {
	if (!request.body || limit === Infinity) return { ok: true, request };
	const declared = request.headers.get('content-length');
	if (declared !== null) {
		const n = Number(declared);
		return Number.isFinite(n) && n >= 0 && n <= limit ? { ok: true, request } : { ok: false };
	}
	const reader = request.body.getReader();
	const chunks: Uint8Array[] = [];
	let total = 0;
	for (;;) {
		const { done, value } = await reader.read();
		if (done) break;
		total += value.byteLength;
		if (total > limit) {
			// Stop reading; no cancel(): adapter-node would destroy the socket before the 413 goes out.
			// The answer closes the connection instead (see hooks.server.ts).
			reader.releaseLock();
			return { ok: false };
		}
		chunks.push(value);
	}
	const body = new Uint8Array(total);
	let at = 0;
	for (const c of chunks) {
		body.set(c, at);
		at += c.byteLength;
	}
	return { ok: true, request: new Request(request.url, { method: request.method, headers: request.headers, body, signal: request.signal }) };
}
