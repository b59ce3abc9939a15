/** Reads the folder the local fake SMTP server writes (development and tests only). */
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';

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
