/** Auth.js configuration: e-mail + password, and e-mail sign-in links; JWT sessions. */
import { CredentialsSignin, type SvelteKitAuthConfig } from '@auth/sveltekit';
import Credentials from '@auth/sveltekit/providers/credentials';
import Nodemailer from '@auth/sveltekit/providers/nodemailer';
import type { RequestEvent } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import { getDb } from '../db';
import { enqueueMail } from '../repositories/outbox';
import { findUserByEmail, normaliseEmail } from '../repositories/users';
import { kickOutbox } from '../mail/outbox';
import { signInLinkMail } from '../mail/templates';
import { knexAdapter } from './adapter';
import { verifyPassword } from './password';
import { isSignInBlocked, recordSignInAttempt } from './rate-limit';

class RateLimited extends CredentialsSignin {
	code = 'rate_limited';
}

function clientIp(event: RequestEvent): string {
	try {
		return event.getClientAddress();
	} catch {
		return 'unknown';
	}
}

export function authConfig(event: RequestEvent): SvelteKitAuthConfig {
	const db = getDb();
	const ip = clientIp(event);
	return {
		secret: env.AUTH_SECRET,
		trustHost: true,
		// Failed sign-ins are expected; keep them out of the error log.
		logger: { error: (e) => { if ((e as { type?: string }).type !== 'CredentialsSignin') console.error(e); }, warn: () => {} },
		adapter: knexAdapter(db),
		session: { strategy: 'jwt', maxAge: 7 * 24 * 3600 },
		pages: { signIn: '/signin', error: '/signin' },
		providers: [
			Credentials({
				id: 'password',
				name: 'E-mail and password',
				credentials: { email: { label: 'E-mail', type: 'email' }, password: { label: 'Password', type: 'password' } },
				async authorize(credentials) {
					const email = typeof credentials?.email === 'string' ? normaliseEmail(credentials.email) : '';
					const password = typeof credentials?.password === 'string' ? credentials.password : '';
					if (!email || !password || email.length > 254 || password.length > 200) return null;
					if (await isSignInBlocked(db, email, ip)) throw new RateLimited();
					const user = await findUserByEmail(db, email);
					const ok = user?.status === 'active' && (await verifyPassword(password, user.password_hash));
					await recordSignInAttempt(db, email, ip, !!ok);
					if (!ok || !user) return null;
					return { id: String(user.id), email: user.email, name: user.name };
				}
			}),
			Nodemailer({
				id: 'link',
				name: 'E-mail link',
				server: { host: env.SMTP_HOST ?? '127.0.0.1', port: Number(env.SMTP_PORT ?? 2525) },
				from: env.MAIL_FROM ?? 'Cairnfield <no-reply@cairnfield.test>',
				maxAge: 24 * 3600,
				normalizeIdentifier: (id) => normaliseEmail(id),
				async sendVerificationRequest({ identifier, url }) {
					// Only existing, active users get a link; the page says the same either way.
					const user = await findUserByEmail(db, identifier);
					if (!user || user.status !== 'active') return;
					await db.transaction(async (trx) => {
						await enqueueMail(trx, signInLinkMail(identifier, url));
					});
					await kickOutbox().catch(() => {});
				}
			})
		],
		callbacks: {
			async signIn({ user, email }) {
				if (email?.verificationRequest) {
					// Rate-limit link requests like password attempts.
					const key = normaliseEmail(user.email ?? '');
					if (await isSignInBlocked(db, key, ip)) return '/signin?error=rate_limited';
					await recordSignInAttempt(db, key, ip, false);
				}
				return true;
			},
			jwt({ token, user }) {
				if (user?.id) token.sub = user.id;
				return token;
			},
			session({ session, token }) {
				if (token.sub) session.user.id = token.sub;
				return session;
			}
		}
	};
}
