/**
 * The app's one object store, built on first use from the run-time environment
 * (STORAGE_BACKEND, STORAGE_DIR, S3_*; see ./create-object-store). Services take the store as an
 * argument; only routes call this.
 */
import { env } from '$env/dynamic/private';
import { createObjectStore } from './create-object-store';
import type { ObjectStore } from './object-store';

let instance: ObjectStore | undefined;

export function getObjectStore(): ObjectStore {
	instance ??= createObjectStore(env);
	return instance;
}
