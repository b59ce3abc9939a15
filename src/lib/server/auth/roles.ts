/** Permissions: one table says which role may do what; every guard asks it. */
import { ROLES, type Role } from '../../roles';

export { ROLES, ROLE_LABELS, ROLE_DUTIES, isRole, type Role } from '../../roles';

const everyone: readonly Role[] = ROLES;

export const PERMISSIONS = {
	'network.view': everyone,
	'network.create': ['admin'],
	'network.edit': ['admin', 'analyst'],
	'network.publish': ['admin'],
	'layer.view': ['admin', 'analyst', 'reviewer'],
	'layer.edit': ['analyst'],
	'recipe.edit': ['analyst'],
	'area.edit': ['admin', 'analyst'],
	'zone.edit': ['analyst'],
	'sensor.view': everyone,
	'sensor.edit': ['admin', 'analyst'],
	'proposal.view': ['admin', 'analyst', 'reviewer'],
	'proposal.edit': ['analyst'],
	'revision.review': ['admin', 'reviewer'],
	'plan.view': everyone,
	'task.view': everyone,
	'task.assign': ['admin', 'analyst'],
	'task.work': ['technician'],
	'users.manage': ['admin'],
	'audit.view': ['admin']
} as const satisfies Record<string, readonly Role[]>;

export type Permission = keyof typeof PERMISSIONS;

export function roleAllows(role: Role | null | undefined, permission: Permission): boolean {
	return !!role && (PERMISSIONS[permission] as readonly Role[]).includes(role);
}
