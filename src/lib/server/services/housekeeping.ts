/**
 * Periodic clean-up of what would otherwise grow for ever or linger with secrets in it:
 * old sign-in attempts, expired sign-in links and reset tokens, outbox messages that failed for
 * good, uploads that a crash interrupted (their row and stored object), and jobs that ended long ago.
 *
 *   JOBS_KEEP_DAYS   days a finished, failed or cancelled job is kept (its result, error and
 *                    progress stay visible that long); default 30
 */
import type { Knex } from 'knex';
import { purgeSignInAttempts } from '../auth/rate-limit';
import { abandonedUploads, deleteLayerRow } from '../repositories/layers';
import { purgeEndedJobs } from '../jobs/queue';
import { purgeFailedMail } from '../repositories/outbox';
import { purgeOldResets } from '../repositories/password-resets';
import type { ObjectStore } from '../storage/object-store';

/** An upload still `uploading`/`processing` this long after its last step was interrupted. */
export const UPLOAD_GRACE_MINUTES = 6 * 60;
/** Failed outbox messages are kept this long for the administrator to see, then removed. */
export const FAILED_MAIL_DAYS = 14;
/** Used or expired reset tokens are kept this long (for support questions), then removed. */
export const RESET_KEEP_DAYS = 7;
/** Finished, failed and cancelled jobs are kept this long (JOBS_KEEP_DAYS), then removed. */
export const JOBS_KEEP_DAYS = 30;

export function jobsKeepDays(env: Record<string, string | undefined> = process.env): number {
	const n = Number(env.JOBS_KEEP_DAYS);
	return env.JOBS_KEEP_DAYS && Number.isFinite(n) && n > 0 ? n : JOBS_KEEP_DAYS;
}

export interface HousekeepingReport {
	signInAttempts: number;
	verificationTokens: number;
	passwordResets: number;
	failedMail: number;
	abandonedUploads: number;
	endedJobs: number;
}

/** Removes rows and stored objects of uploads interrupted more than `graceMinutes` ago. */
export async function sweepAbandonedUploads(db: Knex, store: ObjectStore, graceMinutes = UPLOAD_GRACE_MINUTES, now = Date.now()): Promise<number> {
	const rows = await abandonedUploads(db, new Date(now - graceMinutes * 60_000));
	for (const r of rows) {
		for (const key of [r.storage_key, r.preview_key]) if (key) await store.delete(key).catch(() => undefined);
		await deleteLayerRow(db, r.id);
	}
	return rows.length;
}

export async function runHousekeeping(db: Knex, store: ObjectStore, now = Date.now()): Promise<HousekeepingReport> {
	return {
		signInAttempts: await purgeSignInAttempts(db),
		verificationTokens: await db('verification_tokens').where('expires', '<', new Date(now)).delete(),
		passwordResets: await purgeOldResets(db, RESET_KEEP_DAYS),
		failedMail: await purgeFailedMail(db, FAILED_MAIL_DAYS),
		abandonedUploads: await sweepAbandonedUploads(db, store, UPLOAD_GRACE_MINUTES, now),
		endedJobs: await purgeEndedJobs(db, jobsKeepDays())
	};
}

let timer: NodeJS.Timeout | null = null;

/** Runs housekeeping soon after start and then every `intervalMs`; errors are logged, never thrown. */
export function startHousekeeping(db: () => Knex, store: () => ObjectStore, intervalMs = 3600_000): void {
	if (timer) return;
	const run = () => void runHousekeeping(db(), store()).catch((e) => console.error('housekeeping failed:', e));
	setTimeout(run, 10_000).unref();
	timer = setInterval(run, intervalMs);
	timer.unref();
}
