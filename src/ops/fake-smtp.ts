/**
 * The local fake SMTP server (smtp-server + mailparser): accepts every message on loopback and keeps
 * it as a JSON file in a folder, newest last. The dev inbox page (/dev/inbox) and the tests read
 * that folder. Never used in production.
 */
import { mkdirSync, writeFileSync, renameSync } from 'node:fs';
import type { CapturedMail } from '../lib/server/mail/dev-inbox';
import path from 'node:path';
import { SMTPServer } from 'smtp-server';
import { simpleParser } from 'mailparser';

export async function startFakeSmtp(port: number, dir: string): Promise<{ close(): Promise<void> }> {
	mkdirSync(dir, { recursive: true });
	let seq = 0;
	const server = new SMTPServer({
		authOptional: true,
		// Close promptly on shutdown instead of waiting for idle clients.
		closeTimeout: 2000,
		disabledCommands: ['STARTTLS'],
		logger: false,
		banner: 'Cairnfield local mail catcher',
		onData(stream, session, callback) {
			simpleParser(stream)
				.then((mail) => {
					const id = `${Date.now()}-${process.pid}-${String(seq++).padStart(6, "0")}`;
					const record: CapturedMail = {
						id,
						receivedAt: new Date().toISOString(),
						from: session.envelope.mailFrom ? session.envelope.mailFrom.address : '',
						to: session.envelope.rcptTo.map((r) => r.address),
						subject: mail.subject ?? '',
						text: mail.text ?? '',
						html: typeof mail.html === 'string' ? mail.html : null
					};
					const tmp = path.join(dir, `.${id}.tmp`);
					writeFileSync(tmp, JSON.stringify(record, null, 2));
					renameSync(tmp, path.join(dir, `${id}.json`));
					callback();
				})
				.catch((err) => callback(err));
		}
	});
	await new Promise<void>((resolve, reject) => {
		server.once('error', reject);
		server.listen(port, '127.0.0.1', () => resolve());
	});
	return { close: () => new Promise((r) => server.close(() => r())) };
}

export { readMailbox } from '../lib/server/mail/dev-inbox';
