/** Networks: create and update, each with its audit entry, in one transaction. */
import type { Knex } from 'knex';
import { z } from 'zod';
import { recordAudit } from '../repositories/audit';
import { findNetwork, insertNetwork, listNetworks, slugTaken, updateNetwork, type NetworkRow, type NetworkSummaryRow } from '../repositories/networks';
import { ServiceError } from './errors';
import { settleWorkingCrs } from './working-crs';

const slugRe = /^[a-z0-9]+(?:-[a-z0-9]+)*$/;

/** Projected EPSG codes we accept as a working CRS: UTM north/south (WGS 84) and a few equal-area grids. */
function isAcceptedWorkingCrs(code: number): boolean {
	return (code >= 32601 && code <= 32660) || (code >= 32701 && code <= 32760) || [3035, 6933, 3857, 27700, 2154, 25832, 25833].includes(code);
}

export const networkInput = z.object({
	name: z.string().trim().min(2, 'Give the network a name of at least 2 characters.').max(200, 'Keep the name under 200 characters.'),
	slug: z.string().trim().toLowerCase().max(64, 'Keep the short name under 64 characters.').regex(slugRe, 'Use lower-case letters, digits and single hyphens.').optional(),
	description: z.string().trim().max(5000, 'Keep the description under 5000 characters.').default(''),
	crsEpsg: z.coerce
		.number()
		.int('The EPSG code is a whole number.')
		.refine(isAcceptedWorkingCrs, 'Choose a projected CRS in metres, e.g. a WGS 84 / UTM zone (EPSG:326xx or 327xx).')
		.nullable()
		.default(null),
	publicText: z.string().trim().max(5000, 'Keep the public text under 5000 characters.').default('')
});

export const networkPatch = networkInput.partial().extend({
	publication: z.enum(['private', 'published']).optional(),
	version: z.coerce.number().int().positive('version is required for updates')
});

export type NetworkInput = z.infer<typeof networkInput>;
export type NetworkPatch = z.infer<typeof networkPatch>;

function slugify(name: string): string {
	return (
		name
			.normalize('NFKD')
			.replace(/[\u0300-\u036f]/g, '')
			.toLowerCase()
			.replace(/[^a-z0-9]+/g, '-')
			.replace(/^-+|-+$/g, '')
			.slice(0, 64) || 'network'
	);
}

export async function createNetwork(db: Knex, organisationId: number, actorId: number, input: NetworkInput): Promise<number> {
	return db.transaction(async (trx) => {
		const slug = input.slug ?? slugify(input.name);
		if (await slugTaken(trx, organisationId, slug)) throw new ServiceError(409, 'slug_taken', `A network with the short name "${slug}" already exists.`, 'slug');
		const fields = { name: input.name, slug, description: input.description, crs_epsg: input.crsEpsg, publication: 'private' as const, public_text: input.publicText, study_area: null, exclusions: null };
		const id = await insertNetwork(trx, organisationId, actorId, fields);
		await settleWorkingCrs(trx, id);
		await recordAudit(trx, { organisationId, actorUserId: actorId, action: 'network.create', objectType: 'network', objectId: id, after: fields });
		return id;
	});
}

/** The fields a network shows everywhere, lists included. */
function commonView(n: Omit<NetworkRow, 'study_area' | 'exclusions'>) {
	return {
		id: n.id,
		organisationId: n.organisation_id,
		slug: n.slug,
		name: n.name,
		description: n.description,
		crsEpsg: n.crs_epsg,
		publication: n.publication,
		publicText: n.public_text,
		version: n.version,
		createdAt: n.created_at,
		updatedAt: n.updated_at
	};
}

export function publicView(n: NetworkRow) {
	return { ...commonView(n), studyArea: n.study_area, exclusions: n.exclusions };
}

export type NetworkView = ReturnType<typeof publicView>;

/** A network as lists show it: the same fields as publicView without the geometry. */
export function summaryView(n: NetworkSummaryRow) {
	return { ...commonView(n), hasStudyArea: n.has_study_area };
}

export const NETWORKS_PER_PAGE = [10, 25, 50, 100] as const;

/** A page of the networks in the organisations: `{ networks, total, page, pages, perPage }`. */
export async function networkPage(db: Knex, organisationIds: number[], query: URLSearchParams) {
	const perPageAsked = Number(query.get('perPage') ?? 50);
	const perPage = (NETWORKS_PER_PAGE as readonly number[]).includes(perPageAsked) ? perPageAsked : 50;
	const pageAsked = Number(query.get('page') ?? 1);
	const page = Number.isInteger(pageAsked) && pageAsked >= 1 ? pageAsked : 1;
	const { rows, total } = await listNetworks(db, organisationIds, { limit: perPage, offset: (page - 1) * perPage });
	return { networks: rows.map(summaryView), total, page, pages: Math.max(1, Math.ceil(total / perPage)), perPage };
}

export async function updateNetworkDetails(db: Knex, networkId: number, actorId: number, patch: NetworkPatch, opts: { mayPublish: boolean }): Promise<NetworkRow> {
	return db.transaction(async (trx) => {
		const before = await findNetwork(trx, networkId, { forUpdate: true });
		if (!before) throw new ServiceError(404, 'not_found', 'No such network.');
		if (before.version !== patch.version) throw new ServiceError(409, 'stale', 'Someone else changed this network meanwhile. Reload and try again.');
		if (patch.publication !== undefined && patch.publication !== before.publication && !opts.mayPublish) {
			throw new ServiceError(403, 'forbidden', 'Only an administrator can publish or unpublish a network.', 'publication');
		}
		if (patch.slug && patch.slug !== before.slug && (await slugTaken(trx, before.organisation_id, patch.slug))) {
			throw new ServiceError(409, 'slug_taken', `A network with the short name "${patch.slug}" already exists.`, 'slug');
		}
		const fields: Record<string, unknown> = {};
		if (patch.name !== undefined) fields.name = patch.name;
		if (patch.slug !== undefined) fields.slug = patch.slug;
		if (patch.description !== undefined) fields.description = patch.description;
		if (patch.crsEpsg !== undefined) fields.crs_epsg = patch.crsEpsg;
		if (patch.publicText !== undefined) fields.public_text = patch.publicText;
		if (patch.publication !== undefined) fields.publication = patch.publication;
		const ok = await updateNetwork(trx, networkId, before.version, fields).catch((e: { errno?: number }) => {
			// networks_published_slug: /map/{slug} names no organisation, so a published slug is unique everywhere.
			if (e.errno === 1062) throw new ServiceError(409, 'slug_published', `Another organisation already publishes a network as "${patch.slug ?? before.slug}": change the short name before publishing.`, 'publication');
			throw e;
		});
		if (!ok) throw new ServiceError(409, 'stale', 'Someone else changed this network meanwhile. Reload and try again.');
		if (patch.crsEpsg !== undefined && patch.crsEpsg !== before.crs_epsg) await settleWorkingCrs(trx, networkId);
		const after = (await findNetwork(trx, networkId))!;
		const pick = (n: NetworkRow) => Object.fromEntries(Object.keys(fields).map((k) => [k, (n as unknown as Record<string, unknown>)[k]]));
		await recordAudit(trx, { organisationId: before.organisation_id, actorUserId: actorId, action: 'network.update', objectType: 'network', objectId: networkId, before: pick(before), after: pick(after) });
		return after;
	});
}
