import type { LayoutServerLoad } from './$types';
import { networkAccess } from '$lib/server/auth/network-access';
import { roleAllows } from '$lib/server/auth/roles';

// The network's name and which tabs the role sees. Each page still checks its own permission.
export const load = (async (event) => {
	const { network, role } = await networkAccess(event, 'network.view');
	return {
		networkNav: {
			id: network.id,
			name: network.name,
			tabs: [
				{ href: '', label: 'Overview', show: true },
				{ href: '/map', label: 'Map', show: true },
				{ href: '/layers', label: 'Layers', show: roleAllows(role, 'layer.view') },
				{ href: '/importance', label: 'Importance', show: roleAllows(role, 'layer.view') },
				{ href: '/sensors', label: 'Sensors', show: roleAllows(role, 'sensor.view') },
				{ href: '/zones', label: 'Area & zones', show: roleAllows(role, 'layer.view') },
				{ href: '/proposals', label: 'Proposals', show: roleAllows(role, 'proposal.view') },
				{ href: '/history', label: 'History', show: roleAllows(role, 'plan.view') },
				{ href: '/tasks', label: 'Field tasks', show: roleAllows(role, 'task.assign') },
				{ href: '/field', label: 'My route', show: roleAllows(role, 'task.work') }
			].filter((t) => t.show)
		}
	};
}) satisfies LayoutServerLoad;
