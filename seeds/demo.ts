/**
 * The demo scenario, invented for Cairnfield: one organisation, one network over an invented
 * catchment, one user per role. Idempotent: it checks, then inserts; running it twice changes nothing.
 * The passwords are for local development only; `npm start` prints them.
 */
import type { Knex } from 'knex';
import bcrypt from 'bcryptjs';
import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { seedDemoInventory } from './demo-inventory';
import { seedDemoProposals } from './demo-proposals';
import { seedDemoField } from './demo-field';
import { createObjectStore } from '../src/lib/server/storage/create-object-store';
import type { ObjectStore } from '../src/lib/server/storage/object-store';

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

function demoStudyArea(): unknown | null {
	const file = path.resolve('data/demo/study-area.geojson');
	if (!existsSync(file)) return null;
	const fc = JSON.parse(readFileSync(file, 'utf8'));
	const g = fc.type === 'FeatureCollection' ? fc.features[0]?.geometry : fc.type === 'Feature' ? fc.geometry : fc;
	return g ?? null;
}

/**
 * `store` is where the demo rasters go: the app's object store (STORAGE_* of the environment unless
 * given), so that the app finds them.
 */
export async function seed(knex: Knex, store: ObjectStore = createObjectStore(process.env)): Promise<void> {
	await knex.transaction(async (trx) => {
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
			const area = demoStudyArea();
			const [id] = await trx('networks').insert({
				...DEMO_NETWORK,
				organisation_id: org.id,
				crs_epsg: null,
				study_area: area ? JSON.stringify(area) : null,
				publication: 'published',
				created_by: ids.admin
			});
			await trx('audit_log').insert({ organisation_id: org.id, actor_user_id: ids.admin, action: 'network.create', object_type: 'network', object_id: String(id), after: JSON.stringify({ seeded: true }) });
		}
		await seedDemoInventory(trx, (await trx('networks').select('id').where({ organisation_id: org.id, slug: DEMO_NETWORK.slug }).first()).id);
	});
	await seedDemoProposalStage(knex, store);
}

/** The proposals stage (./demo-proposals), after everything the network holds. */
async function seedDemoProposalStage(knex: Knex, store: ObjectStore): Promise<void> {
	const org = await knex('organisations').select('id').where({ slug: DEMO_ORGANISATION.slug }).first();
	const net = await knex('networks').select('id').where({ organisation_id: org.id, slug: DEMO_NETWORK.slug }).first();
	const user = (role: string) => knex('users').select('id', 'name').where({ email: DEMO_USERS.find((u) => u.role === role)!.email }).first();
	const origin = (process.env.ORIGIN ?? `http://127.0.0.1:${process.env.PORT ?? 3000}`).replace(/\/$/, '');
	await seedDemoProposals(knex, store, { networkId: net.id, analyst: await user('analyst'), reviewer: await user('reviewer') }, origin);
	await seedDemoField(knex, store, { networkId: net.id, analyst: await user('analyst'), reviewer: await user('reviewer'), technician: await user('technician') }, origin);
}
