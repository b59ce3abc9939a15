/**
 * Object store on the local file system: one file per key under a root directory.
 * Writes go to a hidden temporary file in the target directory and are renamed into place,
 * so a reader sees either the old object or the whole new one, never a half-written file.
 * Content types are not kept on disk: a caller that needs one stores it beside the key.
 */
import { randomUUID } from 'node:crypto';
import { createReadStream, createWriteStream } from 'node:fs';
import { mkdir, open, readFile, rename, rm, stat, unlink, writeFile } from 'node:fs/promises';
import type { FileHandle } from 'node:fs/promises';
import path from 'node:path';
import type { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import { checkRange, InvalidObjectKey, ObjectNotFound, validateKey, type ObjectStore, type RangeReader, type PutOptions, type PutResult } from './object-store';

export class FsObjectStore implements ObjectStore {
	readonly root: string;

	constructor(root: string) {
		this.root = path.resolve(root);
	}

	/** Absolute path of a key; the key is validated and must resolve inside the root. */
	private pathOf(key: string): string {
		validateKey(key);
		const full = path.resolve(this.root, ...key.split('/'));
		if (!full.startsWith(this.root + path.sep)) throw new InvalidObjectKey(key, 'resolves outside the storage root');
		return full;
	}

	async put(key: string, body: Readable | Uint8Array, _opts?: PutOptions): Promise<PutResult> {
		const target = this.pathOf(key);
		const dir = path.dirname(target);
		await mkdir(dir, { recursive: true });
		// A leading dot is never a valid key segment, so temp files can never be read as objects.
		const temp = path.join(dir, `.${path.basename(target)}.${randomUUID()}.tmp`);
		try {
			if (body instanceof Uint8Array) {
				await writeFile(temp, body, { flag: 'wx' });
			} else {
				await pipeline(body, createWriteStream(temp, { flags: 'wx' }));
			}
			const { size } = await stat(temp);
			await rename(temp, target);
			return { key, size };
		} catch (e) {
			await rm(temp, { force: true });
			throw e;
		}
	}

	async get(key: string): Promise<Readable> {
		const file = this.pathOf(key);
		await this.requireFile(key, file);
		return createReadStream(file);
	}

	async getBuffer(key: string): Promise<Buffer> {
		const file = this.pathOf(key);
		try {
			return await readFile(file);
		} catch (e) {
			if (isMissing(e)) throw new ObjectNotFound(key);
			throw e;
		}
	}

	async openRanges(key: string): Promise<RangeReader> {
		const file = this.pathOf(key);
		await this.requireFile(key, file);
		let handle: FileHandle;
		try {
			handle = await open(file, 'r');
		} catch (e) {
			if (isMissing(e)) throw new ObjectNotFound(key);
			throw e;
		}
		return {
			async read(offset, length) {
				checkRange(offset, length);
				const out = new Uint8Array(length);
				let done = 0;
				while (done < length) {
					const { bytesRead } = await handle.read(out, done, length - done, offset + done);
					if (bytesRead === 0) break;
					done += bytesRead;
				}
				return done === length ? out : out.subarray(0, done);
			},
			close: () => handle.close()
		};
	}

	async exists(key: string): Promise<boolean> {
		const file = this.pathOf(key);
		try {
			return (await stat(file)).isFile();
		} catch (e) {
			if (isMissing(e)) return false;
			throw e;
		}
	}

	async delete(key: string): Promise<void> {
		const file = this.pathOf(key);
		try {
			await unlink(file);
		} catch (e) {
			if (!isMissing(e)) throw e;
		}
	}

	private async requireFile(key: string, file: string): Promise<void> {
		try {
			if ((await stat(file)).isFile()) return;
		} catch (e) {
			if (!isMissing(e)) throw e;
		}
		throw new ObjectNotFound(key);
	}
}

function isMissing(e: unknown): boolean {
	const code = (e as NodeJS.ErrnoException | null)?.code;
	return code === 'ENOENT' || code === 'ENOTDIR' || code === 'EISDIR';
}

