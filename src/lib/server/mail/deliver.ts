/**
 * One delivery pass over the outbox, with the database and the sender given (no app globals, so
 * tests drive it against their own database and SMTP server). Claimed rows stay locked for the
 * pass (SKIP LOCKED lets several senders share the queue); a failure leaves the message pending
 * with its next attempt after retryDelayMs, until MAX_ATTEMPTS, then marks it failed.
 */
import type { Db } from '../db';
import { claimPending, markFailed, markSent, type OutboxRow } from '../repositories/outbox';

export const MAX_ATTEMPTS = 8;

/** Wait after the n-th failed attempt (n ≥ 1): 5 s, 10 s, 20 s … capped at 30 minutes. */
export function retryDelayMs(attempt: number): number {
	return Math.min(5_000 * 2 ** Math.max(0, attempt - 1), 30 * 60_000);
}

export type SendMail = (row: OutboxRow) => Promise<unknown>;

export async function deliverOutbox(db: Db, send: SendMail, limit = 20): Promise<number> {
	let sent = 0;
	await db.transaction(async (trx) => {
		const rows = await claimPending(trx, limit);
		for (const row of rows) {
			try {
				await send(row);
				await markSent(trx, row.id);
				sent++;
			} catch (err) {
				await markFailed(trx, row.id, err instanceof Error ? err.message : String(err), row.attempts + 1 >= MAX_ATTEMPTS, retryDelayMs(row.attempts + 1));
			}
		}
	});
	return sent;
}
