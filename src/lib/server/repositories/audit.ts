import type { Db } from '../db';

export interface AuditEntry {
	organisationId: number | null;
	actorUserId: number | null;
	action: string;
	objectType: string;
	objectId: string | number | null;
	before?: unknown;
	after?: unknown;
}

/** Writes one audit entry; call it with the transaction of the change it records. */
export async function recordAudit(db: Db, e: AuditEntry): Promise<void> {
	await db('audit_log').insert({
		organisation_id: e.organisationId,
		actor_user_id: e.actorUserId,
		action: e.action,
		object_type: e.objectType,
		object_id: e.objectId === null ? null : String(e.objectId),
		before: e.before === undefined ? null : JSON.stringify(e.before),
		after: e.after === undefined ? null : JSON.stringify(e.after)
	});
}

export interface AuditRow {
	id: number;
	action: string;
	object_type: string;
	object_id: string | null;
	actor_name: string | null;
	created_at: Date;
}

export async function recentAudit(db: Db, organisationId: number, limit = 50): Promise<AuditRow[]> {
	return db('audit_log as a')
		.leftJoin('users as u', 'u.id', 'a.actor_user_id')
		.select('a.id', 'a.action', 'a.object_type', 'a.object_id', 'u.name as actor_name', 'a.created_at')
		.where('a.organisation_id', organisationId)
		.orderBy('a.id', 'desc')
		.limit(limit);
}
