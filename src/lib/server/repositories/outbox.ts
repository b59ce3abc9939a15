import type { Db } from '../db';

export interface OutgoingMail {
	to: string;
	subject: string;
	text: string;
	html?: string;
}

export interface OutboxRow {
	id: number;
	to_address: string;
	subject: string;
	/** Cleared (null) once the message was sent: it may hold a sign-in or reset link. */
	text_body: string | null;
	html_body: string | null;
	attempts: number;
}

/** Queues a message; call it inside the transaction of the change that causes it. */
export async function enqueueMail(db: Db, m: OutgoingMail): Promise<number> {
	const [id] = await db('outbox_messages').insert({ to_address: m.to, subject: m.subject, text_body: m.text, html_body: m.html ?? null });
	return id;
}

/** Claims pending messages for delivery; SKIP LOCKED lets several senders share the queue. */
export async function claimPending(db: Db, limit: number): Promise<OutboxRow[]> {
	return db('outbox_messages')
		.select('id', 'to_address', 'subject', 'text_body', 'html_body', 'attempts')
		.where('status', 'pending')
		.andWhere((q) => q.whereNull('next_attempt_at').orWhere('next_attempt_at', '<=', db.raw('CURRENT_TIMESTAMP(3)')))
		.orderBy('id')
		.limit(limit)
		.forUpdate()
		.skipLocked();
}

/** Marks a message sent and clears its body: a sent body may hold a token link and is never needed again. */
export async function markSent(db: Db, id: number): Promise<void> {
	await db('outbox_messages').where({ id }).update({ status: 'sent', sent_at: db.fn.now(), attempts: db.raw('attempts + 1'), text_body: null, html_body: null });
}

/** Removes messages that failed for good more than `olderThanDays` ago. */
export async function purgeFailedMail(db: Db, olderThanDays: number): Promise<number> {
	return db('outbox_messages').where({ status: 'failed' }).andWhere('created_at', '<', new Date(Date.now() - olderThanDays * 24 * 3600_000)).delete();
}

/** Records a failed attempt; the message waits `retryInMs` before the next one (or gives up). */
export async function markFailed(db: Db, id: number, error: string, giveUp: boolean, retryInMs = 0): Promise<void> {
	await db('outbox_messages')
		.where({ id })
		.update({
			status: giveUp ? 'failed' : 'pending',
			last_error: error.slice(0, 2000),
			attempts: db.raw('attempts + 1'),
			next_attempt_at: db.raw('CURRENT_TIMESTAMP(3) + INTERVAL ? MICROSECOND', [Math.max(0, Math.round(retryInMs)) * 1000])
		});
}
