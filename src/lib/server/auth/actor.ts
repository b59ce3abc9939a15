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

export async function loadActor(db: Db, userId: number): Promise<Actor | null> {
	const user = await findUserById(db, userId);
	if (!user || user.status !== 'active') return null;
	return { id: user.id, email: user.email, name: user.name, memberships: await membershipsOf(db, user.id) };
}

export function roleIn(actor: Actor | null, organisationId: number): Role | null {
	return actor?.memberships.find((m) => m.organisation_id === organisationId)?.role ?? null;
}
