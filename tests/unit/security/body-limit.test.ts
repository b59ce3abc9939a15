import { describe, expect, it } from 'vitest';
import { bodyLimitFor, boundBody, SMALL_BODY_BYTES } from '../../../src/lib/server/http/body-limit';

function chunked(total: number, chunk = 64 * 1024): { request: Request; pulled: () => number } {
	let sent = 0;
	const body = new ReadableStream<Uint8Array>({
		pull(c) {
			if (sent >= total) return c.close();
			const n = Math.min(chunk, total - sent);
			sent += n;
			c.enqueue(new Uint8Array(n));
		}
	});
	// No Content-Length: a chunked upload.
	return { request: new Request('http://x/signin?/password', { method: 'POST', body, duplex: 'half' } as RequestInit), pulled: () => sent };
}

describe('per-route body limits', () => {
	it('give forms and JSON about 1 MiB, and the raster upload its own streamed bound', () => {
		expect(SMALL_BODY_BYTES).toBe(1024 * 1024);
		expect(bodyLimitFor('/(public)/signin', 'POST')).toBe(SMALL_BODY_BYTES);
		expect(bodyLimitFor(null, 'POST')).toBe(SMALL_BODY_BYTES); // Auth.js's /auth/* routes
		expect(bodyLimitFor('/api/v1/networks', 'POST')).toBe(SMALL_BODY_BYTES);
		expect(bodyLimitFor('/api/v1/networks/[id=id]/layers', 'POST')).toBe(Infinity);
		expect(bodyLimitFor('/api/v1/networks/[id=id]/layers', 'GET')).toBe(SMALL_BODY_BYTES);
		// A task's photo: 8 MiB, the photo service's own limit too; the task's JSON updates keep the small one.
		expect(bodyLimitFor('/api/v1/networks/[id=id]/tasks/[taskId=id]/photos', 'POST')).toBe(8 * 1024 * 1024);
		expect(bodyLimitFor('/api/v1/networks/[id=id]/tasks/[taskId=id]/updates', 'POST')).toBe(SMALL_BODY_BYTES);
	});

	it('refuse a declared length over the limit without reading a byte', async () => {
		let pulled = false;
		const body = new ReadableStream({ pull: () => void (pulled = true) }, { highWaterMark: 0 });
		const req = new Request('http://x/', { method: 'POST', body, headers: { 'content-length': String(600 * 1024 * 1024) }, duplex: 'half' } as RequestInit);
		expect((await boundBody(req, SMALL_BODY_BYTES)).ok).toBe(false);
		expect(pulled).toBe(false);
	});

	it('stop reading a chunked body just past the limit', async () => {
		const { request, pulled } = chunked(600 * 1024 * 1024);
		expect((await boundBody(request, SMALL_BODY_BYTES)).ok).toBe(false);
		// What was read, plus the one chunk the stream's own queue fetches ahead: nowhere near 600 MB.
		expect(pulled()).toBeLessThanOrEqual(SMALL_BODY_BYTES + 2 * 64 * 1024);
	});

	it('pass a body within the limit on, intact', async () => {
		const { request } = chunked(300_000);
		const r = await boundBody(request, SMALL_BODY_BYTES);
		expect(r.ok).toBe(true);
		if (r.ok) expect((await r.request.arrayBuffer()).byteLength).toBe(300_000);
		const form = new Request('http://x/', { method: 'POST', body: new URLSearchParams({ a: 'b' }) });
		const f = await boundBody(form, SMALL_BODY_BYTES);
		expect(f.ok && (await f.request.formData()).get('a')).toBe('b');
	});
});
