/** The signed-in person for this request, re-read from MariaDB on every request. */
import type { Db } from '../db';
import { findUserById, membershipsOf, type MembershipRow } from '../repositories/users';
import type { Role } from './roles';

export interface Actor {
	id: number;
	email: string;
	name: string;
	memberships: MembershipRow[];
}

/**
 * The actor of a session, or null when the user is gone or disabled, or when the session began
 * before the user's sessions were ended (its version is older than the user's).
 */
export async function loadActor(db: Db, userId: number, sessionVersion: number): Promise<Actor | null> {
	const user = await findUserById(db, userId);
	if (!user || user.status !== 'active' || user.session_version !== sessionVersion) return null;
	return { id: user.id, email: user.email, name: user.name, memberships: await membershipsOf(db, user.id) };
}

export function roleIn(actor: Actor | null, organisationId: number): Role | null {
	return actor?.memberships.find((m) => m.organisation_id === organisationId)?.role ?? null;
}
