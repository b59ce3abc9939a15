/**
 * Delivers queued outbox messages. Writers enqueue inside their transaction and then call
 * `kickOutbox()`; a timer retries what failed, with exponential backoff (see ./deliver). Delivery
 * happens after commit, never inside it. While SMTP is down nothing is lost: a message stays
 * pending with the time of its next attempt.
 */
import { getDb } from '../db';
import { deliverOutbox } from './deliver';
import { getTransport, mailFrom } from './transport';

let running: Promise<number> | null = null;
let timer: NodeJS.Timeout | null = null;

export async function deliverPending(limit = 20): Promise<number> {
	return deliverOutbox(getDb(), (row) => getTransport().sendMail({ from: mailFrom(), to: row.to_address, subject: row.subject, text: row.text_body ?? '', html: row.html_body ?? undefined }), limit);
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
