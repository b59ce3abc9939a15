/**
 * The demo's proposals stage, after the network's content (layers, recipe, zones, sensors): a new
 * user sees every state of the review at once.
 *
 *   "Autumn baseline"      one range-limited revision, submitted by the analyst and approved by
 *                          the reviewer: the network's plan.
 *   "Spring redeployment"  three revisions, one per strategy, with the analyst's reasons; the
 *                          zone-balanced one is submitted and waits for the demo reviewer.
 *
 * Runs happen on the calling thread (runNow), so the seed needs no job worker. Idempotent: each
 * proposal is made only when no proposal of that title exists. When the network has no importance
 * recipe in use or no sensors yet, the stage says so and does nothing.
 */
import type { Knex } from 'knex';
import type { ObjectStore } from '../src/lib/server/storage/object-store';
import { findNetwork } from '../src/lib/server/repositories/networks';
import { createProposal, saveChoiceNote } from '../src/lib/server/services/proposals';
import { decideRevision, submitRevision } from '../src/lib/server/services/reviews';
import { runNow } from '../src/lib/server/services/runs';
import type { Strategy } from '../src/lib/engine/types';

export interface DemoProposalActors {
	networkId: number;
	analyst: { id: number; name: string };
	reviewer: { id: number; name: string };
}

export const DEMO_PROPOSALS = {
	plan: {
		title: 'Autumn baseline',
		description: 'The layout the crew set out in the autumn, re-run range-limited so that each probe serves what lies within its reach.',
		note: 'Range-limited keeps every probe near ground it can sense; it is the layout in the field now.',
		comment: 'Agreed: this is what stands in the field. Approved as the baseline plan.'
	},
	spring: {
		title: 'Spring redeployment',
		description: 'Where should the relocatable probes stand for the spring wetting-up? The two neutron sensors stay where they are.',
		note: 'Lloyd’s has the lowest cost, but it moves most of the probes over long distances. Zone-balanced gives each sub-catchment probes in proportion to its importance with fewer moves and a fraction of the carrying, so we take the balance.'
	}
} as const;

/** Iterations of the demo runs: enough to converge on the demo grid, short enough for a quick seed. */
const DEMO_ITERATIONS = 80;

export async function seedDemoProposals(db: Knex, store: ObjectStore, a: DemoProposalActors, origin: string, log: (line: string) => void = console.log): Promise<void> {
	const network = await findNetwork(db, a.networkId);
	if (!network) throw new Error(`demo network ${a.networkId} is missing`);
	const inUse = await db('networks').select('recipe_version_id', 'zone_set_id').where({ id: network.id }).first();
	const sensors = await db('sensors').count({ n: '*' }).where({ network_id: network.id, status: 'active' }).first();
	if (!inUse?.recipe_version_id || Number(sensors?.n ?? 0) === 0) {
		log('demo proposals skipped: the demo network has no importance recipe in use or no active sensors yet');
		return;
	}
	const titled = async (title: string) => (await db('proposals').select('id').where({ network_id: network.id, title }).first()) as { id: number } | undefined;

	if (!(await titled(DEMO_PROPOSALS.plan.title))) {
		const p = DEMO_PROPOSALS.plan;
		const id = await createProposal(db, network, a.analyst.id, { title: p.title, description: p.description });
		const rev = await runNow(db, store, network, a.analyst.id, id, { strategy: 'range-limited', maxIterations: DEMO_ITERATIONS });
		await submitRevision(db, network, a.analyst, rev, { note: p.note }, origin);
		await decideRevision(db, network, a.reviewer, rev, { decision: 'approve', comment: p.comment }, origin);
	}
	if (!(await titled(DEMO_PROPOSALS.spring.title))) {
		const p = DEMO_PROPOSALS.spring;
		const id = await createProposal(db, network, a.analyst.id, { title: p.title, description: p.description });
		const strategies: Strategy[] = inUse.zone_set_id ? ['lloyd', 'range-limited', 'zone-balanced'] : ['lloyd', 'range-limited'];
		let last = 0;
		for (const strategy of strategies) last = await runNow(db, store, network, a.analyst.id, id, { strategy, maxIterations: DEMO_ITERATIONS });
		await saveChoiceNote(db, network, a.analyst.id, id, p.note);
		await submitRevision(db, network, a.analyst, last, { note: p.note }, origin);
	}
}
