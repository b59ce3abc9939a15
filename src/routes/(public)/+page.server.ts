import { redirect } from '@sveltejs/kit';
import type { PageServerLoad } from './$types';
import { getDb } from '$lib/server/db';

// The front page is public: signed-in people go to their networks; visitors see published networks.
export const load = (async ({ locals }) => {
	if (locals.actor) redirect(303, '/networks');
	const published = await getDb()('networks as n')
		.join('organisations as o', 'o.id', 'n.organisation_id')
		.select('n.id', 'n.name', 'n.slug', 'n.public_text', 'o.name as organisation')
		.where('n.publication', 'published')
		.orderBy('n.name')
		.limit(50);
	return { published };
}) satisfies PageServerLoad;
