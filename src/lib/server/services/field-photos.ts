/**
 * Photos of field tasks. The technician's phone resizes a camera photo and sends its bytes; the
 * content (never the declared type or a file name) decides whether it is a JPEG or a PNG. The image
 * goes to the object store first, then its row (the link to the task) and the audit entry are
 * written in one transaction; if that fails, the object is removed again, so a refused or failed
 * upload leaves neither a row nor an object. Photos are private: the public map never reads them.
 */
import { createHash } from 'node:crypto';
import type { Knex } from 'knex';
import { imageSize } from 'image-size';
import type { Db } from '../db';
import { PHOTO_BODY_BYTES } from '../http/body-limit';
import { newObjectKey, type ObjectStore } from '../storage';
import { recordAudit } from '../repositories/audit';
import { findTask } from '../repositories/field-tasks';
import { checkIdempotencyKey } from './field-tasks';
import { ServiceError } from './errors';

/** Largest photo accepted (bytes), the route's body limit. */
export const PHOTO_MAX_BYTES = PHOTO_BODY_BYTES;

const TYPES = { jpg: 'image/jpeg', png: 'image/png' } as const;

export interface PhotoView {
	id: number;
	taskId: number;
	contentType: string;
	bytes: number;
	width: number;
	height: number;
	createdAt: string;
	url: string;
}

interface PhotoRow {
	id: number;
	network_id: number;
	task_id: number;
	object_key: string;
	content_type: string;
	bytes: number;
	width: number;
	height: number;
	content_sha256: string | null;
	created_at: Date;
}

const photoView = (r: PhotoRow): PhotoView => ({
	id: r.id,
	taskId: r.task_id,
	contentType: r.content_type,
	bytes: r.bytes,
	width: r.width,
	height: r.height,
	createdAt: r.created_at.toISOString(),
	url: `/api/v1/networks/${r.network_id}/tasks/${r.task_id}/photos/${r.id}`
});

/**
 * The image's type and size from its content: JPEG or PNG, else a 415 with a message a person can
 * act on. image-size reads the format's signature and header (JPEG's SOI marker and SOF frame,
 * PNG's signature and IHDR chunk).
 */
export function sniffPhoto(bytes: Uint8Array): { contentType: (typeof TYPES)[keyof typeof TYPES]; width: number; height: number } {
	const refuse = () => new ServiceError(415, 'unsupported_image', 'Only JPEG and PNG photos can be added: take the photo with the camera, or choose a JPEG or PNG file.');
	if (bytes.byteLength === 0) throw new ServiceError(400, 'empty_photo', 'The photo is empty: take it again.');
	let info: { type?: string; width?: number; height?: number };
	try {
		info = imageSize(bytes);
	} catch {
		throw refuse();
	}
	const type = info.type === 'jpg' || info.type === 'png' ? info.type : null;
	if (!type || !info.width || !info.height) throw refuse();
	return { contentType: TYPES[type], width: info.width, height: info.height };
}

/** The photos of the given tasks, grouped by task id, oldest first. */
export async function photosOfTasks(db: Db, networkId: number, taskIds: readonly number[]): Promise<Record<number, PhotoView[]>> {
	const out: Record<number, PhotoView[]> = {};
	if (taskIds.length === 0) return out;
	const rows: PhotoRow[] = await db('field_task_photos').where({ network_id: networkId }).whereIn('task_id', taskIds).orderBy('id');
	for (const r of rows) (out[r.task_id] ??= []).push(photoView(r));
	return out;
}

/**
 * Adds a photo to a task the actor is assigned to. An idempotency key already used for a photo of
 * this task with the same bytes returns the photo stored then (`replayed`), whatever has happened to
 * the task since, and stores nothing again; the key with other bytes or another task is a 422.
 */
export async function addTaskPhoto(
	db: Knex,
	store: ObjectStore,
	network: { id: number; organisation_id: number },
	actor: { id: number },
	taskId: number,
	bytes: Uint8Array,
	key: string | null
): Promise<{ photo: PhotoView; replayed: boolean }> {
	if (key !== null) checkIdempotencyKey(key);
	if (bytes.byteLength > PHOTO_MAX_BYTES) throw new ServiceError(413, 'too_large', `The photo is larger than ${PHOTO_MAX_BYTES / 1024 / 1024} MB.`);
	const task = await findTask(db, network.id, taskId);
	if (!task) throw new ServiceError(404, 'not_found', 'No such task.');
	if (task.assignee_id !== actor.id) throw new ServiceError(403, 'not_assignee', 'This task is assigned to someone else.');
	const sha256 = createHash('sha256').update(bytes).digest('hex');
	const replay = async () => {
		if (key === null) return null;
		const row: PhotoRow | undefined = await db('field_task_photos').where({ network_id: network.id, idempotency_key: key }).first();
		if (!row) return null;
		if (row.task_id !== taskId) throw new ServiceError(422, 'idempotency_key_reused', 'This Idempotency-Key was already used for a photo of another task.');
		if (row.content_sha256 !== null && row.content_sha256 !== sha256) throw new ServiceError(422, 'idempotency_key_reused', 'This Idempotency-Key was already used for another photo.');
		return { photo: photoView(row), replayed: true };
	};
	const seen = await replay();
	if (seen) return seen;
	if (task.state === 'cancelled') throw new ServiceError(409, 'cancelled', 'This task was cancelled: no photos can be added.');
	const image = sniffPhoto(bytes);

	const objectKey = newObjectKey(`photos/${network.id}`);
	await store.put(objectKey, bytes, { contentType: image.contentType });
	try {
		const id = await db.transaction(async (trx) => {
			const [photoId] = await trx('field_task_photos').insert({ network_id: network.id, task_id: taskId, object_key: objectKey, content_type: image.contentType, bytes: bytes.byteLength, width: image.width, height: image.height, content_sha256: sha256, idempotency_key: key, user_id: actor.id });
			await recordAudit(trx, { organisationId: network.organisation_id, actorUserId: actor.id, action: 'task.photo', objectType: 'task', objectId: taskId, after: { photoId, contentType: image.contentType, bytes: bytes.byteLength, width: image.width, height: image.height } });
			return photoId as number;
		});
		const row: PhotoRow = await db('field_task_photos').where({ id }).first();
		return { photo: photoView(row), replayed: false };
	} catch (e) {
		await store.delete(objectKey).catch(() => undefined);
		// The same key sent twice at once: the loser's insert hits the unique key; answer with the winner's photo.
		if ((e as { errno?: number }).errno === 1062) {
			const again = await replay();
			if (again) return again;
		}
		throw e;
	}
}

/**
 * One photo's bytes for a reader with task.view: analysts and admins see every task's photos,
 * a technician only those of tasks assigned to them.
 */
export async function readTaskPhoto(db: Db, store: ObjectStore, networkId: number, taskId: number, photoId: number, reader: { id: number; ownTasksOnly: boolean }): Promise<{ body: Buffer; contentType: string }> {
	const row: PhotoRow | undefined = await db('field_task_photos').where({ id: photoId, task_id: taskId, network_id: networkId }).first();
	const task = row ? await findTask(db, networkId, taskId) : undefined;
	if (!row || !task || (reader.ownTasksOnly && task.assignee_id !== reader.id)) throw new ServiceError(404, 'not_found', 'No such photo.');
	return { body: await store.getBuffer(row.object_key), contentType: row.content_type };
}
