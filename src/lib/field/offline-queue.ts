/**
 * Field work done with no signal waits here, in IndexedDB (through idb), until it is sent: task
 * updates, photos (the resized image as a Blob) and the day's acknowledgement of the cautions.
 * Each update and photo keeps its Idempotency-Key from the moment it is queued, so sending it twice
 * (a lost answer, two tabs, a retry) applies it once; an acknowledgement is one per user, network
 * and day on the server, so it needs no key. Sending goes acknowledgements first, then the updates
 * in the order they were made, then the photos in the order they were taken: a photo goes after
 * the task update it belongs to. An update the server refuses because the task has moved on (409,
 * another device first) stays here marked as a conflict, with the server's task, until the
 * technician dismisses it: nothing is overwritten.
 */
import { openDB, type DBSchema, type IDBPDatabase } from 'idb';
import type { UpdateBody } from './update-form';

export interface QueuedUpdate {
	/** The Idempotency-Key, also the record's key. */
	key: string;
	networkId: number;
	taskId: number;
	body: UpdateBody;
	queuedAt: number;
	status: 'waiting' | 'conflict' | 'rejected';
	/** For a conflict or a rejection: the server's message, and for a conflict the task as it is now. */
	message?: string;
	serverTask?: { state: string; blockedReason?: string | null } & Record<string, unknown>;
}

export interface QueuedPhoto {
	/** The Idempotency-Key, also the record's key. */
	key: string;
	networkId: number;
	taskId: number;
	/** The photo as resized on the phone, ready to send. */
	blob: Blob;
	queuedAt: number;
	status: 'waiting' | 'rejected';
	message?: string;
}

export interface QueuedAcknowledgement {
	/** `${networkId}:${day}`: one a network and day. */
	key: string;
	networkId: number;
	/** UTC day, as the server counts it. */
	day: string;
	acknowledgedAt: string;
}

interface QueueDb extends DBSchema {
	updates: { key: string; value: QueuedUpdate; indexes: { byNetwork: number } };
	photos: { key: string; value: QueuedPhoto; indexes: { byNetwork: number } };
	acknowledgements: { key: string; value: QueuedAcknowledgement; indexes: { byNetwork: number } };
}

const DB_NAME = 'cairnfield-field';
let opened: Promise<IDBPDatabase<QueueDb>> | null = null;
const database = () =>
	(opened ??= openDB<QueueDb>(DB_NAME, 2, {
		upgrade(db, oldVersion) {
			if (oldVersion < 1) db.createObjectStore('updates', { keyPath: 'key' }).createIndex('byNetwork', 'networkId');
			if (oldVersion < 2) {
				db.createObjectStore('photos', { keyPath: 'key' }).createIndex('byNetwork', 'networkId');
				db.createObjectStore('acknowledgements', { keyPath: 'key' }).createIndex('byNetwork', 'networkId');
			}
		}
	}));

/** The UTC day of a moment, as the server counts acknowledgements. */
export const utcDay = (at: Date = new Date()): string => at.toISOString().slice(0, 10);

/** A network's entries of one store, oldest first. */
async function oldestFirst<S extends 'updates' | 'photos'>(store: S, networkId: number): Promise<QueueDb[S]['value'][]> {
	const all = await (await database()).getAllFromIndex(store, 'byNetwork', IDBKeyRange.only(networkId));
	return all.sort((a, b) => a.queuedAt - b.queuedAt);
}

export async function enqueue(update: Omit<QueuedUpdate, 'status' | 'queuedAt'>): Promise<void> {
	await (await database()).put('updates', { ...update, status: 'waiting', queuedAt: Date.now() });
}

/** This network's queued updates, oldest first. */
export const queued = (networkId: number): Promise<QueuedUpdate[]> => oldestFirst('updates', networkId);

export async function dismiss(key: string): Promise<void> {
	await (await database()).delete('updates', key);
}

/** Keeps a photo for a task until it can be sent, under its own Idempotency-Key. */
export async function enqueuePhoto(photo: Omit<QueuedPhoto, 'status' | 'queuedAt'>): Promise<void> {
	await (await database()).put('photos', { ...photo, status: 'waiting', queuedAt: Date.now() });
}

/** This network's queued photos, oldest first. */
export const queuedPhotos = (networkId: number): Promise<QueuedPhoto[]> => oldestFirst('photos', networkId);

export async function dismissPhoto(key: string): Promise<void> {
	await (await database()).delete('photos', key);
}

/** Keeps today's acknowledgement of the cautions until it can be sent (one a network and day). */
export async function enqueueAcknowledgement(networkId: number, at: Date = new Date()): Promise<void> {
	const db = await database();
	const day = utcDay(at);
	const key = `${networkId}:${day}`;
	if (!(await db.get('acknowledgements', key))) await db.put('acknowledgements', { key, networkId, day, acknowledgedAt: at.toISOString() });
}

export async function queuedAcknowledgements(networkId: number): Promise<QueuedAcknowledgement[]> {
	return (await database()).getAllFromIndex('acknowledgements', 'byNetwork', networkId);
}

export interface SyncOutcome {
	sent: number;
	conflicts: number;
	rejected: number;
	/** True when the connection failed again part-way: the rest still waits. */
	interrupted: boolean;
}

let running: Promise<SyncOutcome> | null = null;

/** Not the request's fault (the server, or a lapsed sign-in): keep it for the next try. */
const retryLater = (status: number) => status >= 500 || status === 401 || status === 403;

/**
 * Sends this network's waiting acknowledgements, updates and photos, one at a time, in that order.
 * One sync at a time per page. Stops at the first request that gets no answer (or a 5xx, 401, 403):
 * what is left waits for the next sync.
 */
export function sync(networkId: number, fetcher: typeof fetch = fetch): Promise<SyncOutcome> {
	return (running ??= (async () => {
		const outcome: SyncOutcome = { sent: 0, conflicts: 0, rejected: 0, interrupted: false };
		const send = async (url: string, init: RequestInit): Promise<Response | null> => {
			try {
				const res = await fetcher(url, init);
				if (!retryLater(res.status)) return res;
			} catch {
				// No network.
			}
			outcome.interrupted = true;
			return null;
		};
		try {
			const db = await database();
			for (const a of await queuedAcknowledgements(networkId)) {
				const res = await send(`/api/v1/networks/${a.networkId}/cautions/acknowledgements`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ acknowledgedAt: a.acknowledgedAt }) });
				if (!res) return outcome;
				// Sent, or refused (too old, a wrong clock): either way nothing more to do; the page asks again.
				await db.delete('acknowledgements', a.key);
				if (res.ok) outcome.sent++;
				else outcome.rejected++;
			}
			for (const u of await queued(networkId)) {
				if (u.status !== 'waiting') continue;
				const res = await send(`/api/v1/networks/${u.networkId}/tasks/${u.taskId}/updates`, { method: 'POST', headers: { 'content-type': 'application/json', 'idempotency-key': u.key }, body: JSON.stringify(u.body) });
				if (!res) return outcome;
				const answer = await res.json().catch(() => ({}));
				if (res.ok) {
					await db.delete('updates', u.key);
					outcome.sent++;
				} else if (res.status === 409) {
					await db.put('updates', { ...u, status: 'conflict', message: answer?.error?.message, serverTask: answer?.task });
					outcome.conflicts++;
				} else {
					await db.put('updates', { ...u, status: 'rejected', message: answer?.error?.message ?? `The server refused this update (${res.status}).` });
					outcome.rejected++;
				}
			}
			for (const p of await queuedPhotos(networkId)) {
				if (p.status !== 'waiting') continue;
				const res = await send(`/api/v1/networks/${p.networkId}/tasks/${p.taskId}/photos`, { method: 'POST', headers: { 'content-type': p.blob.type || 'application/octet-stream', 'idempotency-key': p.key }, body: p.blob });
				if (!res) return outcome;
				if (res.ok) {
					await db.delete('photos', p.key);
					outcome.sent++;
				} else {
					const answer = await res.json().catch(() => ({}));
					await db.put('photos', { ...p, status: 'rejected', message: answer?.error?.message ?? `The server refused this photo (${res.status}).` });
					outcome.rejected++;
				}
			}
		} finally {
			running = null;
		}
		return outcome;
	})());
}
