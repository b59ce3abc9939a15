/**
 * Task updates made with no signal wait here, in IndexedDB (through idb), until they are sent.
 * Each keeps its Idempotency-Key from the moment it is queued, so sending it twice (a lost answer,
 * two tabs, a retry) applies it once. Sending goes in the order the updates were made; an update
 * the server refuses because the task has moved on (409, another device first) stays here marked
 * as a conflict, with the server's task, until the technician dismisses it: nothing is overwritten.
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

interface QueueDb extends DBSchema {
	updates: { key: string; value: QueuedUpdate; indexes: { byNetwork: number } };
}

const DB_NAME = 'cairnfield-field';
let opened: Promise<IDBPDatabase<QueueDb>> | null = null;
const database = () =>
	(opened ??= openDB<QueueDb>(DB_NAME, 1, {
		upgrade(db) {
			db.createObjectStore('updates', { keyPath: 'key' }).createIndex('byNetwork', 'networkId');
		}
	}));

export async function enqueue(update: Omit<QueuedUpdate, 'status' | 'queuedAt'>): Promise<void> {
	await (await database()).put('updates', { ...update, status: 'waiting', queuedAt: Date.now() });
}

/** This network's queued updates, oldest first. */
export async function queued(networkId: number): Promise<QueuedUpdate[]> {
	const all = await (await database()).getAllFromIndex('updates', 'byNetwork', networkId);
	return all.sort((a, b) => a.queuedAt - b.queuedAt);
}

export async function dismiss(key: string): Promise<void> {
	await (await database()).delete('updates', key);
}

export interface SyncOutcome {
	sent: number;
	conflicts: number;
	rejected: number;
	/** True when the connection failed again part-way: the rest still waits. */
	interrupted: boolean;
}

let running: Promise<SyncOutcome> | null = null;

/** Sends this network's waiting updates, one at a time, in order. One sync at a time per page. */
export function sync(networkId: number, fetcher: typeof fetch = fetch): Promise<SyncOutcome> {
	return (running ??= (async () => {
		const outcome: SyncOutcome = { sent: 0, conflicts: 0, rejected: 0, interrupted: false };
		try {
			for (const u of await queued(networkId)) {
				if (u.status !== 'waiting') continue;
				let res: Response;
				try {
					res = await fetcher(`/api/v1/networks/${u.networkId}/tasks/${u.taskId}/updates`, {
						method: 'POST',
						headers: { 'content-type': 'application/json', 'idempotency-key': u.key },
						body: JSON.stringify(u.body)
					});
				} catch {
					outcome.interrupted = true;
					break;
				}
				if (res.status >= 500 || res.status === 401 || res.status === 403) {
					// Not the update's fault (the server, or a lapsed sign-in): keep it for the next try.
					outcome.interrupted = true;
					break;
				}
				const answer = await res.json().catch(() => ({}));
				const db = await database();
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
		} finally {
			running = null;
		}
		return outcome;
	})());
}
