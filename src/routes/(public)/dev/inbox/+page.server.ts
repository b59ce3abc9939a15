import { error } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import type { PageServerLoad } from './$types';
import { devInboxDir, readMailbox } from '$lib/server/mail/dev-inbox';
import { isLoopbackHost } from '$lib/server/http/public-origin';

// Development only: the mail caught by the local fake SMTP server. Absent (404) unless asked for on a
// loopback ORIGIN outside production (see devInboxDir), and only for requests from this machine.
export const load = (async ({ getClientAddress }) => {
	const dir = devInboxDir({ ...env, NODE_ENV: process.env.NODE_ENV });
	if (!dir || !isLoopbackHost(getClientAddress())) error(404, 'This page does not exist.');
	return { messages: readMailbox(dir).reverse().slice(0, 100) };
}) satisfies PageServerLoad;
