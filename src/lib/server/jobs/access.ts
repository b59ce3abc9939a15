/** Who may follow and cancel a network's jobs: viewing follows the layers; cancelling, the kind's own edit right. */
import type { Permission } from '../auth/roles';

export const JOB_VIEW_PERMISSION: Permission = 'layer.view';

const EDIT: Record<string, Permission> = {
	'layer-processing': 'layer.edit',
	placement: 'recipe.edit',
	'recipe-preview': 'recipe.edit',
	zones: 'zone.edit',
	'recipe-version': 'recipe.edit',
	'proposal-run': 'proposal.edit'
};

export function jobEditPermission(kind: string): Permission {
	return EDIT[kind] ?? 'network.edit';
}
