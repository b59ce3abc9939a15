import { error } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import type { PageServerLoad } from './$types';
import { readMailbox } from '$lib/server/mail/dev-inbox';

const LOOPBACK = /^(127\.\d+\.\d+\.\d+|::1|::ffff:127\.\d+\.\d+\.\d+)$/;

// Development only: the mail caught by the local fake SMTP server. Absent (404) unless DEV_MAIL_DIR is
// set, and only for requests from this machine: the messages hold sign-in links.
export const load = (async ({ getClientAddress }) => {
	const dir = env.DEV_MAIL_DIR;
	if (!dir || !LOOPBACK.test(getClientAddress())) error(404, 'This page does not exist.');
	return { messages: readMailbox(dir).reverse().slice(0, 100) };
}) satisfies PageServerLoad;
