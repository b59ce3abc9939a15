/**
 * The object-store contract shared by every storage backend. Uploaded layers, previews and
 * field photos live here under opaque keys; the database keeps only the key.
 */
import { randomUUID } from 'node:crypto';
import type { Readable } from 'node:stream';

export interface PutOptions {
	contentType?: string;
}

export interface PutResult {
	key: string;
	/** Bytes stored. */
	size: number;
}

export interface RangeReader {
	/** `length` bytes from byte `offset`: fewer at the end of the object, none past it. */
	read(offset: number, length: number): Promise<Uint8Array>;
	close(): Promise<void>;
}

export interface ObjectStore {
	/** Store `body` under `key`, replacing any object already there. */
	put(key: string, body: Readable | Uint8Array, opts?: PutOptions): Promise<PutResult>;
	/** A stream of the object's bytes; rejects with ObjectNotFound when there is none. */
	get(key: string): Promise<Readable>;
	/** The whole object in memory; rejects with ObjectNotFound when there is none. */
	getBuffer(key: string): Promise<Buffer>;
	/**
	 * The object opened for reads of byte ranges (rasters are read this way, tile by tile, never
	 * whole); rejects with ObjectNotFound when there is none. Close the reader when done.
	 */
	openRanges(key: string): Promise<RangeReader>;
	exists(key: string): Promise<boolean>;
	/** Remove the object; deleting a missing key is not an error. */
	delete(key: string): Promise<void>;
}

/** A key that does not follow the rules of validateKey. */
export class InvalidObjectKey extends Error {
	constructor(
		public readonly key: string,
		reason: string
	) {
		super(`Invalid storage key ${JSON.stringify(key)}: ${reason}`);
		this.name = 'InvalidObjectKey';
	}
}

export class ObjectNotFound extends Error {
	constructor(public readonly key: string) {
		super(`No stored object under key ${JSON.stringify(key)}`);
		this.name = 'ObjectNotFound';
	}
}

const KEY_SEGMENT = /^[A-Za-z0-9][A-Za-z0-9._-]*$/;
const MAX_KEY_LENGTH = 512;

/**
 * Keys are relative slash-separated paths of plain segments (letters, digits, `.`, `_`, `-`,
 * not starting with a dot): no `..`, no absolute paths, no backslashes, no empty segments.
 * The same rule for every backend, so a key that works on one works on all.
 */
export function validateKey(key: string): string {
	if (typeof key !== 'string' || key.length === 0) throw new InvalidObjectKey(String(key), 'empty');
	if (key.length > MAX_KEY_LENGTH) throw new InvalidObjectKey(key, `longer than ${MAX_KEY_LENGTH} characters`);
	if (key.startsWith('/')) throw new InvalidObjectKey(key, 'absolute paths are not allowed');
	if (key.includes('\\')) throw new InvalidObjectKey(key, 'backslashes are not allowed');
	for (const segment of key.split('/')) {
		if (segment === '') throw new InvalidObjectKey(key, 'empty path segment');
		if (segment === '.' || segment === '..') throw new InvalidObjectKey(key, '"." and ".." segments are not allowed');
		if (!KEY_SEGMENT.test(segment)) {
			throw new InvalidObjectKey(key, `segment ${JSON.stringify(segment)} may hold only letters, digits, ".", "_" and "-" and must not start with a dot`);
		}
	}
	return key;
}

/**
 * A fresh key under `prefix` (e.g. `layers` → `layers/2b1e…`). Keys never derive from user
 * file names, so an upload can neither choose nor guess where it lands.
 */
export function newObjectKey(prefix: string): string {
	const clean = prefix.replace(/\/+$/, '');
	if (clean !== '') validateKey(clean);
	const key = clean === '' ? randomUUID() : `${clean}/${randomUUID()}`;
	return validateKey(key);
}

export function isObjectNotFound(e: unknown): e is ObjectNotFound {
	return e instanceof ObjectNotFound;
}

/** A byte range must start at a whole, non-negative offset and have a whole, non-negative length. */
export function checkRange(offset: number, length: number): void {
	if (!Number.isSafeInteger(offset) || offset < 0 || !Number.isSafeInteger(length) || length < 0) {
		throw new RangeError(`invalid byte range: offset ${offset}, length ${length}`);
	}
}
