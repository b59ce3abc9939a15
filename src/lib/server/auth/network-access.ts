/**
 * The guard for everything under a network (pages, actions and API routes): loads the network,
 * answers 404 when it does not exist or belongs to another organisation (its existence is not
 * told), then checks the permission in the network's organisation (403 / 401 / sign-in redirect).
 */
import { error, type RequestEvent } from '@sveltejs/kit';
import { getDb } from '../db';
import { ApiError } from '../api/errors';
import { findNetwork, type NetworkRow } from '../repositories/networks';
import { roleIn, type Actor } from './actor';
import { requireActor, requirePermission } from './guard';
import type { Permission, Role } from './roles';

export interface NetworkAccess {
	network: NetworkRow;
	actor: Actor;
	role: Role;
}

export async function networkAccess(event: RequestEvent, permission: Permission, paramName = 'id'): Promise<NetworkAccess> {
	const actor = requireActor(event);
	const id = Number(event.params[paramName as keyof typeof event.params]);
	const network = Number.isInteger(id) && id > 0 ? await findNetwork(getDb(), id) : undefined;
	if (!network || !roleIn(actor, network.organisation_id)) {
		if (event.url.pathname.startsWith('/api/')) throw new ApiError(404, 'not_found', 'No such network.');
		error(404, 'No such network.');
	}
	const { role } = requirePermission(event, permission, network.organisation_id);
	return { network, actor, role };
}
