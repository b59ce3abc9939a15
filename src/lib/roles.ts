/** The roles a member of an organisation can hold (shared by server and browser). */
export const ROLES = ['admin', 'analyst', 'reviewer', 'technician'] as const;
export type Role = (typeof ROLES)[number];

export const ROLE_LABELS: Record<Role, string> = {
	admin: 'Administrator',
	analyst: 'Analyst',
	reviewer: 'Reviewer',
	technician: 'Field technician'
};

export const ROLE_DUTIES: Record<Role, string> = {
	admin: 'Users, invitations, roles and networks',
	analyst: 'Loads layers, edits sensors, runs placements, drafts proposals',
	reviewer: 'Approves or rejects proposal revisions (never their own)',
	technician: 'Sees and completes assigned field tasks'
};

export function isRole(value: unknown): value is Role {
	return typeof value === 'string' && (ROLES as readonly string[]).includes(value);
}
