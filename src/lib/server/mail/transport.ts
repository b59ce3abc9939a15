/** SMTP delivery with nodemailer. SMTP_HOST/SMTP_PORT point at the fake server in development and tests. */
import { env } from '$env/dynamic/private';
import nodemailer, { type Transporter } from 'nodemailer';

let transporter: Transporter | undefined;

export function mailFrom(): string {
	return env.MAIL_FROM ?? 'Cairnfield <no-reply@cairnfield.test>';
}

export function getTransport(): Transporter {
	transporter ??= nodemailer.createTransport({
		host: env.SMTP_HOST ?? '127.0.0.1',
		port: Number(env.SMTP_PORT ?? 2525),
		secure: env.SMTP_SECURE === 'true',
		auth: env.SMTP_USER ? { user: env.SMTP_USER, pass: env.SMTP_PASSWORD ?? '' } : undefined,
		// The local fake offers no TLS; a real relay should set SMTP_SECURE or support STARTTLS.
		ignoreTLS: env.SMTP_IGNORE_TLS !== 'false' && !env.SMTP_USER
	});
	return transporter;
}
