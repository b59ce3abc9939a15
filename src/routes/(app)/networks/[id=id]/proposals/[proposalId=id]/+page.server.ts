import { error, fail } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { getDb } from '$lib/server/db';
import { networkAccess } from '$lib/server/auth/network-access';
import { roleAllows } from '$lib/server/auth/roles';
import { serviceFailure } from '$lib/server/forms';
import { listSensors } from '$lib/server/repositories/sensors';
import { listSensorTypes } from '$lib/server/repositories/sensor-types';
import { listZoneSets, networkZoneSetId } from '$lib/server/repositories/zones';
import { listRecipeViews } from '$lib/server/services/importance';
import { STRATEGY_HELP } from '$lib/server/services/placement';
import { getProposalView } from '$lib/server/services/proposals';
import { ALL_STRATEGIES, cancelRun, listRunViews, queueRuns } from '$lib/server/services/runs';
import { STRATEGIES } from '$lib/engine/types';
import { runFormInput } from './run-form';

export const load = (async (event) => {
	const { network, role } = await networkAccess(event, 'proposal.view');
	const db = getDb();
	const proposalId = Number(event.params.proposalId);
	const proposal = await getProposalView(db, network.id, proposalId).catch(() => null);
	if (!proposal) error(404, 'No such proposal.');
	const [runs, recipes, zoneSets, currentZoneSet, types, sensors] = await Promise.all([
		listRunViews(db, network.id, proposalId),
		listRecipeViews(db, network.id),
		listZoneSets(db, network.id),
		networkZoneSetId(db, network.id),
		listSensorTypes(db, network.id),
		listSensors(db, network.id)
	]);
	const typeById = new Map(types.map((t) => [t.id, t]));
	return {
		networkId: network.id,
		proposal,
		runs,
		strategies: STRATEGIES.map((s) => ({ id: s, ...STRATEGY_HELP[s] })),
		recipeVersions: recipes.recipes.flatMap((r) => r.versions.map((v) => ({ id: v.id, label: `${r.name}, version ${v.version}${v.id === recipes.currentVersionId ? ' (the network’s current one)' : ''}` }))),
		currentRecipeVersionId: recipes.currentVersionId,
		zoneSets: zoneSets.map((z) => ({ id: z.id, label: `${z.name || 'Unnamed'} (${z.kind})${z.id === currentZoneSet ? ' (in use)' : ''}` })),
		currentZoneSetId: currentZoneSet,
		sensorTypes: types.map((t) => ({ id: t.id, name: t.name, mobility: t.mobility, radiusM: Number(t.radius_m) })),
		sensors: sensors.rows.map((s) => ({ id: s.id, code: s.code, type: s.type_name, status: s.status, mobility: typeById.get(s.sensor_type_id)?.mobility ?? 'fixed' })),
		canEdit: roleAllows(role, 'proposal.edit')
	};
}) satisfies PageServerLoad;

async function queue(event: Parameters<Actions[string]>[0], all: boolean) {
	const { network, actor } = await networkAccess(event, 'proposal.edit');
	const { input, values } = runFormInput(await event.request.formData());
	if (all) input.strategy ??= 'lloyd';
	try {
		const runs = await queueRuns(getDb(), network, actor.id, Number(event.params.proposalId), input, all ? ALL_STRATEGIES : undefined);
		return { queued: runs.map((r) => r.id) };
	} catch (err) {
		return serviceFailure(err, values);
	}
}

export const actions = {
	run: (event) => queue(event, false),
	runAll: (event) => queue(event, true),
	cancel: async (event) => {
		const { network, actor } = await networkAccess(event, 'proposal.edit');
		const runId = Number((await event.request.formData()).get('runId'));
		if (!Number.isInteger(runId) || runId < 1) return fail(400, { errors: { _: 'Choose a run to cancel.' }, values: {} });
		try {
			await cancelRun(getDb(), network, actor.id, runId);
		} catch (err) {
			return serviceFailure(err);
		}
		return { cancelled: runId };
	}
} satisfies Actions;
