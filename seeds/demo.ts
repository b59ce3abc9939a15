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
import { seedDemoProposals } from './demo-proposals';
import { seedDemoField } from './demo-field';

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
 * Whether the demo users (with their published passwords) may be created: only for a local start,
 * where ORIGIN is a loopback address, unless SEED_DEMO_USERS=true asks for them explicitly, and
 * then with a loud warning. SEED_DEMO_USERS=false never creates them.
 */
export function demoUsersWanted(origin: string | undefined, env: Record<string, string | undefined>): { users: boolean; warning: string | null } {
	if (env.SEED_DEMO_USERS === 'false') return { users: false, warning: null };
	let host = '';
	try {
		host = origin ? new URL(origin).hostname.replace(/^\[|\]$/g, '') : '';
	} catch {
		host = '';
	}
	const loopback = host === 'localhost' || host === '::1' || /^127(\.\d{1,3}){3}$/.test(host);
	if (loopback) return { users: true, warning: null };
	if (env.SEED_DEMO_USERS === 'true') {
		return {
			users: true,
			warning: `WARNING: demo users with published passwords are being created on ${origin}, which is not this machine alone. Anyone who reads the README can sign in as an administrator. Remove them before real use.`
		};
	}
	return { users: false, warning: `demo users skipped: ORIGIN ${origin ?? '(unset)'} is not a loopback address (set SEED_DEMO_USERS=true to create them anyway)` };
}

/**
 * `opts.users`: whether to create the demo users (see demoUsersWanted); `opts.store`: where the demo
 * rasters go, the app's object store (STORAGE_* of the environment unless given); `opts.origin`:
 * the origin of links in the demo's e-mail (ORIGIN, else the local default).
 */
export async function seed(knex: Knex, opts: { users?: boolean; store?: ObjectStore; origin?: string } = {}): Promise<void> {
	const withUsers = opts.users ?? true;
	const store = opts.store ?? createObjectStore(process.env);
	const actors = await knex.transaction(async (trx) => {
		let org = await trx('organisations').select('id').where({ slug: DEMO_ORGANISATION.slug }).first();
		if (!org) {
			const [id] = await trx('organisations').insert(DEMO_ORGANISATION);
			org = { id };
		}
		const ids: Record<string, number> = {};
		for (const u of withUsers ? DEMO_USERS : []) {
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
				created_by: ids.admin ?? null
			});
			await trx('audit_log').insert({ organisation_id: org.id, actor_user_id: ids.admin ?? null, action: 'network.create', object_type: 'network', object_id: String(id), after: JSON.stringify({ seeded: true }) });
		}
		const networkId: number = (await trx('networks').select('id').where({ organisation_id: org.id, slug: DEMO_NETWORK.slug }).first()).id;
		await seedDemoInventory(trx, networkId);
		return { organisationId: org.id as number, networkId, analystId: ids.analyst ?? null };
	});
	// After the commit: each service opens its own transaction, as it does for an upload.
	await seedDemoNetwork(knex, store, actors);
	if (withUsers) await seedDemoProposalStage(knex, store, opts.origin);
	else console.log('demo proposals skipped: they need the demo users');
}

/** The proposals stage (./demo-proposals), after everything the network holds. */
async function seedDemoProposalStage(knex: Knex, store: ObjectStore, originOpt: string | undefined): Promise<void> {
	const org = await knex('organisations').select('id').where({ slug: DEMO_ORGANISATION.slug }).first();
	const net = await knex('networks').select('id').where({ organisation_id: org.id, slug: DEMO_NETWORK.slug }).first();
	const user = (role: string) => knex('users').select('id', 'name').where({ email: DEMO_USERS.find((u) => u.role === role)!.email }).first();
	const origin = (originOpt ?? process.env.ORIGIN ?? `http://127.0.0.1:${process.env.PORT ?? 3000}`).replace(/\/$/, '');
	await seedDemoProposals(knex, store, { networkId: net.id, analyst: await user('analyst'), reviewer: await user('reviewer') }, origin);
	await seedDemoField(knex, store, { networkId: net.id, analyst: await user('analyst'), reviewer: await user('reviewer'), technician: await user('technician') }, origin);
}
