/**
 * The demo's field stage, after the proposals stage: the "Summer field season" proposal (Lloyd,
 * with one new probe) approved as the network's plan, its tasks spread to the demo technician
 * from the first site, the first two moves on the route done (one set 4 m from its site, one 14 m away and so flagged
 * against the default 10 m tolerance) and the next task blocked with a reason. The network stays
 * published, so /map/{slug} shows the result on a fresh start.
 *
 * Idempotent: nothing happens when a proposal of that title exists. Runs on the calling thread.
 */
import type { Knex } from 'knex';
import geodesic from 'geographiclib-geodesic';
import type { ObjectStore } from '../src/lib/server/storage/object-store';
import { findNetwork } from '../src/lib/server/repositories/networks';
import { createProposal } from '../src/lib/server/services/proposals';
import { decideRevision, submitRevision } from '../src/lib/server/services/reviews';
import { runNow } from '../src/lib/server/services/runs';
import { applyTaskUpdate, assignTasks, currentTasks } from '../src/lib/server/services/field-tasks';

export interface DemoFieldActors {
	networkId: number;
	analyst: { id: number; name: string };
	reviewer: { id: number; name: string };
	technician: { id: number; name: string };
}

export const DEMO_FIELD = {
	title: 'Summer field season',
	description: 'Spread the relocatable probes for the summer drying-down and add one probe where the importance map has no cover.',
	note: 'Lloyd gives the lowest cost; the crew has the summer for the carries.',
	comment: 'Approved for the summer season.',
	blockedReason: 'Gate locked and the landowner is away until Friday.'
} as const;

/** A point `m` metres from lon/lat on the bearing `azi` (GeographicLib's direct problem). */
function offset(lon: number, lat: number, azi: number, m: number): { lon: number; lat: number } {
	const r = geodesic.Geodesic.WGS84.Direct(lat, lon, azi, m);
	return { lon: r.lon2!, lat: r.lat2! };
}

export async function seedDemoField(db: Knex, store: ObjectStore, a: DemoFieldActors, origin: string, log: (line: string) => void = console.log): Promise<void> {
	const network = await findNetwork(db, a.networkId);
	if (!network) throw new Error(`demo network ${a.networkId} is missing`);
	if (await db('proposals').select('id').where({ network_id: network.id, title: DEMO_FIELD.title }).first()) return;
	const inUse = await db('networks').select('recipe_version_id').where({ id: network.id }).first();
	if (!inUse?.recipe_version_id) {
		log('demo field stage skipped: the demo network has no importance recipe in use');
		return;
	}
	const id = await createProposal(db, network, a.analyst.id, { title: DEMO_FIELD.title, description: DEMO_FIELD.description });
	const rev = await runNow(db, store, network, a.analyst.id, id, { strategy: 'lloyd', maxIterations: 80, addCount: 1 });
	await submitRevision(db, network, a.analyst, rev, { note: DEMO_FIELD.note }, origin);
	await decideRevision(db, network, a.reviewer, rev, { decision: 'approve', comment: DEMO_FIELD.comment }, origin);
	const tasks = await currentTasks(db, network.id);
	if (tasks.length === 0) return;
	await assignTasks(db, network, a.analyst, { spread: true, assigneeIds: [a.technician.id], start: tasks[0].target }, origin);
	const route = await currentTasks(db, network.id, { assigneeId: a.technician.id });
	// The two done are moves, so the demo's inventory keeps its fourteen sensors; the blocked one is
	// the next task on the route that is still open.
	const [first, second] = route.filter((t) => t.kind === 'move');
	const third = route.find((t) => t !== first && t !== second);
	const key = (n: string) => `demo-field-${network.id}-${n}`;
	const finish = async (t: (typeof route)[number], metres: number, tag: string, note: string) => {
		await applyTaskUpdate(db, network, a.technician, t.id, key(`${tag}-start`), { state: 'started', fromState: 'open' });
		const at = offset(t.target.lon, t.target.lat, 45, metres);
		await applyTaskUpdate(db, network, a.technician, t.id, key(`${tag}-done`), { state: 'done', fromState: 'started', position: { ...at, accuracyM: 3.5 }, note });
	};
	if (first) await finish(first, 4, '1', 'Set beside the field drain, rods vertical.');
	if (second) await finish(second, 14, '2', 'Moved off the planned spot: a buried drain marked there.');
	if (third) await applyTaskUpdate(db, network, a.technician, third.id, key('3-block'), { state: 'blocked', fromState: 'open', reason: DEMO_FIELD.blockedReason });
}
