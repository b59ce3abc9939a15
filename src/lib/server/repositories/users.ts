import type { Db } from '../db';
import type { Role } from '../auth/roles';

export interface UserRow {
	id: number;
	email: string;
	name: string;
	password_hash: string | null;
	status: 'active' | 'disabled';
	email_verified_at: Date | null;
	/** Raised to end every session of the user at once; each session carries the value it began with. */
	session_version: number;
	created_at: Date;
}

export interface MembershipRow {
	organisation_id: number;
	organisation_name: string;
	organisation_slug: string;
	role: Role;
}

const userColumns = ['id', 'email', 'name', 'password_hash', 'status', 'email_verified_at', 'session_version', 'created_at'] as const;

export function normaliseEmail(email: string): string {
	return email.trim().toLowerCase();
}

export async function findUserById(db: Db, id: number): Promise<UserRow | undefined> {
	return db<UserRow>('users').select(...userColumns).where({ id }).first();
}

export async function findUserByEmail(db: Db, email: string): Promise<UserRow | undefined> {
	return db<UserRow>('users').select(...userColumns).where({ email: normaliseEmail(email) }).first();
}

export async function insertUser(db: Db, user: { email: string; name: string; password_hash: string | null; email_verified_at?: Date | null }): Promise<number> {
	const [id] = await db('users').insert({ ...user, email: normaliseEmail(user.email) });
	return id;
}

export async function updateUser(db: Db, id: number, patch: Partial<Pick<UserRow, 'name' | 'password_hash' | 'status' | 'email_verified_at'>>): Promise<void> {
	await db('users').where({ id }).update({ ...patch, updated_at: db.fn.now() });
}

/** Ends every session the user holds: sessions that carry an older version are refused. */
export async function bumpSessionVersion(db: Db, id: number): Promise<void> {
	await db('users').where({ id }).update({ session_version: db.raw('session_version + 1'), updated_at: db.fn.now() });
}

export async function membershipsOf(db: Db, userId: number): Promise<MembershipRow[]> {
	return db('memberships as m')
		.join('organisations as o', 'o.id', 'm.organisation_id')
		.select('m.organisation_id', 'o.name as organisation_name', 'o.slug as organisation_slug', 'm.role')
		.where('m.user_id', userId)
		.orderBy('o.name');
}

export interface MemberListRow {
	user_id: number;
	email: string;
	name: string;
	status: 'active' | 'disabled';
	role: Role;
	created_at: Date;
}

export async function membersOf(db: Db, organisationId: number): Promise<MemberListRow[]> {
	return db('memberships as m')
		.join('users as u', 'u.id', 'm.user_id')
		.select('u.id as user_id', 'u.email', 'u.name', 'u.status', 'm.role', 'm.created_at')
		.where('m.organisation_id', organisationId)
		.orderBy('u.name');
}

export async function membership(db: Db, organisationId: number, userId: number): Promise<{ role: Role } | undefined> {
	return db('memberships').select('role').where({ organisation_id: organisationId, user_id: userId }).first();
}

export async function setMembership(db: Db, organisationId: number, userId: number, role: Role): Promise<void> {
	await db('memberships').insert({ organisation_id: organisationId, user_id: userId, role }).onConflict(['organisation_id', 'user_id']).merge({ role });
}

export async function removeMembership(db: Db, organisationId: number, userId: number): Promise<number> {
	return db('memberships').where({ organisation_id: organisationId, user_id: userId }).delete();
}

export async function countAdmins(db: Db, organisationId: number): Promise<number> {
	const row = await db('memberships as m')
		.join('users as u', 'u.id', 'm.user_id')
		.where({ 'm.organisation_id': organisationId, 'm.role': 'admin', 'u.status': 'active' })
		.count({ n: '*' })
		.first();
	return Number(row?.n ?? 0);
}
