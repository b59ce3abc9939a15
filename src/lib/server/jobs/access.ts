/**
 * Who may follow and cancel a network's jobs: following needs the kind's view right (the layers'
 * for most; any member for the map image, which every member's map waits for), cancelling the
 * kind's own edit right.
 */
import type { Permission } from '../auth/roles';

export const JOB_VIEW_PERMISSION: Permission = 'layer.view';

const VIEW: Record<string, Permission> = {
	'map-importance': 'network.view'
};

const EDIT: Record<string, Permission> = {
	'layer-processing': 'layer.edit',
	placement: 'recipe.edit',
	'recipe-preview': 'recipe.edit',
	zones: 'zone.edit',
	'recipe-version': 'recipe.edit',
	'proposal-run': 'proposal.edit',
	'map-importance': 'recipe.edit'
};

export function jobViewPermission(kind: string): Permission {
	return VIEW[kind] ?? JOB_VIEW_PERMISSION;
}

export function jobEditPermission(kind: string): Permission {
	return EDIT[kind] ?? 'network.edit';
}
