/**
 * A technician's acknowledgement of the field cautions, one per user, network and day. The day is
 * the UTC date of the moment they acknowledged: a phone with no signal queues the acknowledgement
 * with that moment and sends it later, and it still counts for the day it was made. The first
 * acknowledgement of a day is kept (with its audit entry); sending it again changes nothing and
 * answers the first one. Only the signed-in technician acknowledges, and only for themselves.
 */
import type { Knex } from 'knex';
import { z } from 'zod';
import type { Db } from '../db';
import { recordAudit } from '../repositories/audit';
import { ServiceError } from './errors';

/** How far ahead of the server's clock a phone's clock may be (ms), and how long a queued acknowledgement stays valid. */
const CLOCK_SKEW_MS = 5 * 60_000;
const OLDEST_MS = 7 * 24 * 3_600_000;

export interface CautionAcknowledgementView {
	networkId: number;
	day: string;
	acknowledgedAt: string;
}

interface AckRow {
	network_id: number;
	/** `YYYY-MM-DD`, formatted by the server (no time zone on the way). */
	day: string;
	acknowledged_at: Date;
}

/** The UTC calendar day of a moment, `YYYY-MM-DD`. */
export const utcDay = (at: Date = new Date()): string => at.toISOString().slice(0, 10);

const view = (r: AckRow): CautionAcknowledgementView => ({ networkId: r.network_id, day: r.day, acknowledgedAt: r.acknowledged_at.toISOString() });

const input = z.object({ acknowledgedAt: z.iso.datetime({ offset: true, message: 'acknowledgedAt must be a date and time (ISO 8601).' }).optional() }).strict();

/** Has this user acknowledged this network's cautions on `day` (default: today, UTC)? */
export async function cautionsAcknowledged(db: Db, networkId: number, userId: number, day: string = utcDay()): Promise<boolean> {
	return (await db('field_caution_acknowledgements').where({ network_id: networkId, user_id: userId, day }).first('id')) !== undefined;
}

/**
 * Records that `actor` read the cautions of `network`, at `acknowledgedAt` (the phone's moment,
 * default now). A moment in the future (beyond a few minutes of clock skew) or more than a week
 * old is refused.
 */
export async function acknowledgeCautions(
	db: Knex,
	network: { id: number; organisation_id: number },
	actor: { id: number },
	raw: unknown,
	now: Date = new Date()
): Promise<{ acknowledgement: CautionAcknowledgementView; replayed: boolean }> {
	const parsed = input.safeParse(raw ?? {});
	if (!parsed.success) throw ServiceError.fromZod(parsed.error);
	const at = parsed.data.acknowledgedAt ? new Date(parsed.data.acknowledgedAt) : now;
	if (at.getTime() > now.getTime() + CLOCK_SKEW_MS) throw new ServiceError(400, 'invalid_input', 'The acknowledgement is dated in the future: check the phone’s clock.', 'acknowledgedAt');
	if (at.getTime() < now.getTime() - OLDEST_MS) throw new ServiceError(422, 'too_old', 'This acknowledgement is more than a week old: read the cautions again.', 'acknowledgedAt');
	const day = utcDay(at);
	const existing = async () => {
		const row: AckRow | undefined = await db('field_caution_acknowledgements').select('network_id', db.raw("DATE_FORMAT(day, '%Y-%m-%d') AS day"), 'acknowledged_at').where({ network_id: network.id, user_id: actor.id, day }).first();
		return row ? { acknowledgement: view(row), replayed: true } : null;
	};
	const seen = await existing();
	if (seen) return seen;
	try {
		await db.transaction(async (trx) => {
			await trx('field_caution_acknowledgements').insert({ user_id: actor.id, network_id: network.id, day, acknowledged_at: at });
			await recordAudit(trx, { organisationId: network.organisation_id, actorUserId: actor.id, action: 'cautions.acknowledge', objectType: 'network', objectId: network.id, after: { day, acknowledgedAt: at.toISOString() } });
		});
	} catch (e) {
		// Two devices (or a retry) at once: the unique key keeps the first; answer with it.
		if ((e as { errno?: number }).errno === 1062) {
			const again = await existing();
			if (again) return again;
		}
		throw e;
	}
	return { acknowledgement: { networkId: network.id, day, acknowledgedAt: at.toISOString() }, replayed: false };
}
