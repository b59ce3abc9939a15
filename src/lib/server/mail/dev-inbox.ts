/** Reads the folder the local fake SMTP server writes (development and tests only). */
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { originIsLoopback } from '../http/public-origin';

/**
 * The development inbox shows every sign-in and reset link, so it is on only when all hold: it was
 * asked for (DEV_INBOX=true) with a mail folder (DEV_MAIL_DIR), NODE_ENV is not production, and
 * ORIGIN is a loopback address (behind a same-host reverse proxy every request comes from
 * 127.0.0.1, so the client address alone proves nothing).
 */
export function devInboxDir(env: Record<string, string | undefined>): string | null {
	if (env.DEV_INBOX !== 'true' || !env.DEV_MAIL_DIR) return null;
	if (env.NODE_ENV === 'production') return null;
	if (!originIsLoopback(env)) return null;
	return env.DEV_MAIL_DIR;
}

export interface CapturedMail {
	id: string;
	receivedAt: string;
	from: string;
	to: string[];
	subject: string;
	text: string;
	html: string | null;
}

export function readMailbox(dir: string): CapturedMail[] {
	let names: string[];
	try {
		names = readdirSync(dir).filter((n) => n.endsWith('.json'));
	} catch {
		return [];
	}
	return names
		.sort()
		.map((n) => JSON.parse(readFileSync(path.join(dir, n), 'utf8')) as CapturedMail);
}
