import { error } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import type { PageServerLoad } from './$types';
import { readMailbox } from '$lib/server/mail/dev-inbox';

// Development only: the mail caught by the local fake SMTP server. Absent (404) unless DEV_MAIL_DIR is set.
export const load = (async () => {
	const dir = env.DEV_MAIL_DIR;
	if (!dir) error(404, 'This page does not exist.');
	return { messages: readMailbox(dir).reverse().slice(0, 100) };
}) satisfies PageServerLoad;
