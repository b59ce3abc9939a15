/** One behavioural contract that every ObjectStore backend must meet. */
import { createHash, randomBytes } from 'node:crypto';
import { Readable } from 'node:stream';
import { describe, expect, it } from 'vitest';
import { InvalidObjectKey, ObjectNotFound, newObjectKey, type ObjectStore } from '../../../src/lib/server/storage';

async function readAll(stream: Readable): Promise<Buffer> {
	const chunks: Buffer[] = [];
	for await (const c of stream) chunks.push(Buffer.from(c as Uint8Array));
	return Buffer.concat(chunks);
}

/** A stream of `total` pseudo-random bytes in uneven chunks, and the SHA-256 of those bytes. */
function unevenStream(total: number): { stream: Readable; sha256: string } {
	const bytes = randomBytes(total);
	const pieces: Buffer[] = [];
	let at = 0;
	let step = 1000;
	while (at < total) {
		pieces.push(bytes.subarray(at, Math.min(total, at + step)));
		at += step;
		step = step * 3 + 17; // uneven, growing chunk sizes
		if (step > 3_000_000) step = 1234;
	}
	return { stream: Readable.from(pieces), sha256: createHash('sha256').update(bytes).digest('hex') };
}

export function objectStoreContract(name: string, getStore: () => ObjectStore, opts: { largeBytes: number }): void {
	describe(`${name} object store contract`, () => {
		it('put(Uint8Array) then getBuffer returns the same bytes and size', async () => {
			const store = getStore();
			const key = newObjectKey('contract');
			const body = new TextEncoder().encode('soil moisture 0.23 m3/m3');
			const res = await store.put(key, body, { contentType: 'text/plain' });
			expect(res).toEqual({ key, size: body.byteLength });
			expect(new Uint8Array(await store.getBuffer(key))).toEqual(body);
			expect(await store.exists(key)).toBe(true);
		});

		it('openRanges reads byte ranges: fewer at the end, none past it', async () => {
			const store = getStore();
			const key = newObjectKey('contract');
			await store.put(key, new TextEncoder().encode('0123456789'));
			const reader = await store.openRanges(key);
			try {
				const text = async (o: number, n: number) => new TextDecoder().decode(await reader.read(o, n));
				expect(await text(2, 3)).toBe('234');
				expect(await text(0, 10)).toBe('0123456789');
				expect(await text(8, 5)).toBe('89');
				expect(await text(12, 4)).toBe('');
				await expect(reader.read(-1, 4)).rejects.toBeInstanceOf(RangeError);
			} finally {
				await reader.close();
			}
			await expect(store.openRanges(newObjectKey('contract'))).rejects.toBeInstanceOf(ObjectNotFound);
		});

		it('get streams the stored bytes', async () => {
			const store = getStore();
			const key = newObjectKey('contract/nested/deeper');
			await store.put(key, Buffer.from('abc'));
			expect((await readAll(await store.get(key))).toString()).toBe('abc');
		});

		it('put(Readable) stores a stream larger than one upload part, byte for byte', async () => {
			const store = getStore();
			const key = newObjectKey('contract');
			const { stream, sha256 } = unevenStream(opts.largeBytes);
			const res = await store.put(key, stream, { contentType: 'application/octet-stream' });
			expect(res.size).toBe(opts.largeBytes);
			const back = await store.getBuffer(key);
			expect(back.length).toBe(opts.largeBytes);
			expect(createHash('sha256').update(back).digest('hex')).toBe(sha256);
		});

		it('put(Readable) of an empty stream stores an empty object', async () => {
			const store = getStore();
			const key = newObjectKey('contract');
			const res = await store.put(key, Readable.from([]));
			expect(res.size).toBe(0);
			expect((await store.getBuffer(key)).length).toBe(0);
		});

		it('put replaces an existing object', async () => {
			const store = getStore();
			const key = newObjectKey('contract');
			await store.put(key, Buffer.from('first version, longer'));
			await store.put(key, Buffer.from('second'));
			expect((await store.getBuffer(key)).toString()).toBe('second');
		});

		it('missing keys: exists is false, get and getBuffer reject with ObjectNotFound, delete is a no-op', async () => {
			const store = getStore();
			const key = newObjectKey('contract');
			expect(await store.exists(key)).toBe(false);
			await expect(store.get(key)).rejects.toBeInstanceOf(ObjectNotFound);
			await expect(store.getBuffer(key)).rejects.toBeInstanceOf(ObjectNotFound);
			await expect(store.delete(key)).resolves.toBeUndefined();
		});

		it('delete removes the object', async () => {
			const store = getStore();
			const key = newObjectKey('contract');
			await store.put(key, Buffer.from('x'));
			await store.delete(key);
			expect(await store.exists(key)).toBe(false);
			await expect(store.getBuffer(key)).rejects.toBeInstanceOf(ObjectNotFound);
		});

		it.each(['../escape', 'a/../../b', '/etc/passwd', 'a//b', '', 'a\\b', '.hidden', 'a/./b', 'sp ace'])(
			'refuses the key %j with InvalidObjectKey on every operation',
			async (bad) => {
				const store = getStore();
				await expect(store.put(bad, Buffer.from('x'))).rejects.toBeInstanceOf(InvalidObjectKey);
				await expect(store.get(bad)).rejects.toBeInstanceOf(InvalidObjectKey);
				await expect(store.getBuffer(bad)).rejects.toBeInstanceOf(InvalidObjectKey);
				await expect(store.exists(bad)).rejects.toBeInstanceOf(InvalidObjectKey);
				await expect(store.delete(bad)).rejects.toBeInstanceOf(InvalidObjectKey);
			}
		);
	});
}
