import { mkdtemp, readdir, rm, stat } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { Readable } from 'node:stream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { FsObjectStore } from '../../../src/lib/server/storage';
import { objectStoreContract } from './contract';

let dir = '';
let store: FsObjectStore;

beforeAll(async () => {
	dir = await mkdtemp(path.join(tmpdir(), 'cairnfield-fs-store-'));
	store = new FsObjectStore(dir);
});
afterAll(async () => {
	await rm(dir, { recursive: true, force: true });
});

objectStoreContract('fs', () => store, { largeBytes: 3 * 1024 * 1024 + 7 });

describe('FsObjectStore specifics', () => {
	it('writes the object as a file under the root at the key path', async () => {
		await store.put('layers/abc/def.tif', Buffer.from('tiff'));
		const s = await stat(path.join(dir, 'layers', 'abc', 'def.tif'));
		expect(s.size).toBe(4);
	});

	it('a failing stream leaves neither the object nor a temp file behind', async () => {
		const failing = new Readable({
			read() {
				this.push(Buffer.from('partial'));
				this.destroy(new Error('client went away'));
			}
		});
		await expect(store.put('broken/upload', failing)).rejects.toThrow('client went away');
		expect(await store.exists('broken/upload')).toBe(false);
		expect(await readdir(path.join(dir, 'broken'))).toEqual([]);
	});

	it('a failed replace keeps the previous object whole (atomic rename)', async () => {
		await store.put('atomic/obj', Buffer.from('old complete object'));
		const failing = new Readable({
			read() {
				this.push(Buffer.from('new half'));
				this.destroy(new Error('cut'));
			}
		});
		await expect(store.put('atomic/obj', failing)).rejects.toThrow('cut');
		expect((await store.getBuffer('atomic/obj')).toString()).toBe('old complete object');
	});

	it('a directory is not an object', async () => {
		await store.put('dirs/inner/file', Buffer.from('x'));
		expect(await store.exists('dirs/inner')).toBe(false);
	});
});
