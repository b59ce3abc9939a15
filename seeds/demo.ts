/**
 * The demo scenario, invented for Cairnfield: one organisation, one network over an invented
 * catchment, one user per role, and the network's content from data/demo/ (./demo-network.ts).
 * Idempotent: it checks, then inserts; running it twice changes nothing.
 * The passwords are for local development only; `npm start` prints them.
 */
import type { Knex } from 'knex';
import bcrypt from 'bcryptjs';
import { createObjectStore } from '../src/lib/server/storage/create-object-store';
import type { ObjectStore } from '../src/lib/server/storage/object-store';
import { seedDemoInventory } from './demo-inventory';
import { seedDemoNetwork } from './demo-network';

export const DEMO_ORGANISATION = { slug: 'fellside-hydrology', name: 'Fellside Hydrology Co-operative' };

export const DEMO_USERS = [
	{ email: 'admin@cairnfield.test', name: 'Maren Oakes', role: 'admin', password: 'demo-admin-pass' },
	{ email: 'analyst@cairnfield.test', name: 'Idris Calloway', role: 'analyst', password: 'demo-analyst-pass' },
	{ email: 'reviewer@cairnfield.test', name: 'Sunniva Brook', role: 'reviewer', password: 'demo-reviewer-pass' },
	{ email: 'technician@cairnfield.test', name: 'Tobiah Reyne', role: 'technician', password: 'demo-technician-pass' }
] as const;

export const DEMO_NETWORK = {
	slug: 'vennarrow-vale',
	name: 'Vennarrow Vale soil moisture',
	description:
		'Soil-moisture probes and two cosmic-ray neutron sensors across the invented Vennarrow Vale catchment: sandy heath, pine stands, the Vennarrow Water reservoir and the valley floor along the beck.',
	public_text: 'A demonstration network in an invented catchment. All data are generated.'
};

/**
 * `store` is where the demo rasters go: the app's object store (STORAGE_* of the environment unless
 * given), so that the app finds them.
 */
export async function seed(knex: Knex, store: ObjectStore = createObjectStore(process.env)): Promise<void> {
	const actors = await knex.transaction(async (trx) => {
		let org = await trx('organisations').select('id').where({ slug: DEMO_ORGANISATION.slug }).first();
		if (!org) {
			const [id] = await trx('organisations').insert(DEMO_ORGANISATION);
			org = { id };
		}
		const ids: Record<string, number> = {};
		for (const u of DEMO_USERS) {
			let user = await trx('users').select('id').where({ email: u.email }).first();
			if (!user) {
				const [id] = await trx('users').insert({ email: u.email, name: u.name, password_hash: bcrypt.hashSync(u.password, 10), email_verified_at: new Date() });
				user = { id };
			}
			ids[u.role] = user.id;
			const m = await trx('memberships').select('id').where({ organisation_id: org.id, user_id: user.id }).first();
			if (!m) await trx('memberships').insert({ organisation_id: org.id, user_id: user.id, role: u.role });
		}
		const net = await trx('networks').select('id').where({ organisation_id: org.id, slug: DEMO_NETWORK.slug }).first();
		if (!net) {
			const [id] = await trx('networks').insert({
				...DEMO_NETWORK,
				organisation_id: org.id,
				crs_epsg: null,
				study_area: null,
				publication: 'published',
				created_by: ids.admin
			});
			await trx('audit_log').insert({ organisation_id: org.id, actor_user_id: ids.admin, action: 'network.create', object_type: 'network', object_id: String(id), after: JSON.stringify({ seeded: true }) });
		}
		const networkId: number = (await trx('networks').select('id').where({ organisation_id: org.id, slug: DEMO_NETWORK.slug }).first()).id;
		await seedDemoInventory(trx, networkId);
		return { organisationId: org.id as number, networkId, analystId: ids.analyst };
	});
	// After the commit: each service opens its own transaction, as it does for an upload.
	await seedDemoNetwork(knex, store, actors);
}
