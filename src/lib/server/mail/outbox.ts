/**
 * Delivers queued outbox messages. Writers enqueue inside their transaction and then call
 * `kickOutbox()`; a timer retries what failed. Delivery happens after commit, never inside it.
 */
import { getDb } from '../db';
import { claimPending, markFailed, markSent } from '../repositories/outbox';
import { getTransport, mailFrom } from './transport';

const MAX_ATTEMPTS = 5;
let running: Promise<number> | null = null;
let timer: NodeJS.Timeout | null = null;

export async function deliverPending(limit = 20): Promise<number> {
	const db = getDb();
	let sent = 0;
	await db.transaction(async (trx) => {
		const rows = await claimPending(trx, limit);
		for (const row of rows) {
			try {
				await getTransport().sendMail({ from: mailFrom(), to: row.to_address, subject: row.subject, text: row.text_body ?? '', html: row.html_body ?? undefined });
				await markSent(trx, row.id);
				sent++;
			} catch (err) {
				await markFailed(trx, row.id, err instanceof Error ? err.message : String(err), row.attempts + 1 >= MAX_ATTEMPTS);
			}
		}
	});
	return sent;
}

/** Starts a delivery pass now (coalesced with one already running). */
export function kickOutbox(): Promise<number> {
	running ??= deliverPending().finally(() => (running = null));
	return running;
}

export function startOutboxTimer(intervalMs = 15_000): void {
	if (timer) return;
	timer = setInterval(() => void kickOutbox().catch(() => {}), intervalMs);
	timer.unref();
}
