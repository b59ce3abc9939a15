/** Auth.js configuration: e-mail + password, and e-mail sign-in links; JWT sessions. */
import { CredentialsSignin, type SvelteKitAuthConfig } from '@auth/sveltekit';
import Credentials from '@auth/sveltekit/providers/credentials';
import Nodemailer from '@auth/sveltekit/providers/nodemailer';
import type { RequestEvent } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import { getDb } from '../db';
import { enqueueMail } from '../repositories/outbox';
import { findUserByEmail, findUserById, normaliseEmail } from '../repositories/users';
import { kickOutbox } from '../mail/outbox';
import { signInLinkMail, SIGN_IN_LINK_MINUTES } from '../mail/templates';
import { publicOrigin, sameOriginPath, signInLinkOnOrigin } from '../http/public-origin';
import { knexAdapter } from './adapter';
import { checkPassword } from './credentials';
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
	const origin = publicOrigin();
	// Auth.js builds its own URLs from AUTH_URL when set, and from Host / X-Forwarded-Host when not:
	// pin it to ORIGIN so that no request header ever chooses where a link or redirect points.
	env.AUTH_URL = `${origin}/auth`;
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
					const email = typeof credentials?.email === 'string' ? credentials.email : '';
					const password = typeof credentials?.password === 'string' ? credentials.password : '';
					const result = await checkPassword(db, email, password, ip);
					if (!result.ok) {
						if (result.reason === 'throttled') throw new RateLimited();
						return null;
					}
					return { id: String(result.user.id), email: result.user.email, name: result.user.name };
				}
			}),
			Nodemailer({
				id: 'link',
				name: 'E-mail link',
				server: { host: env.SMTP_HOST ?? '127.0.0.1', port: Number(env.SMTP_PORT ?? 2525) },
				from: env.MAIL_FROM ?? 'Cairnfield <no-reply@cairnfield.test>',
				maxAge: SIGN_IN_LINK_MINUTES * 60,
				normalizeIdentifier: (id) => normaliseEmail(id),
				async sendVerificationRequest({ identifier, url }) {
					// Only existing, active users get a link; the page says the same either way, and
					// delivery is not awaited, so the answer takes as long either way.
					const user = await findUserByEmail(db, identifier);
					if (!user || user.status !== 'active') return;
					await db.transaction(async (trx) => {
						await enqueueMail(trx, signInLinkMail(identifier, signInLinkOnOrigin(url, origin)));
					});
					void kickOutbox().catch(() => {});
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
			redirect({ url }) {
				return origin + sameOriginPath(url, '/networks', origin);
			},
			async jwt({ token, user }) {
				if (user?.id) {
					// A session carries the user's session version from when it began (see auth/actor.ts).
					token.sub = user.id;
					token.sessionVersion = (await findUserById(db, Number(user.id)))?.session_version ?? -1;
				}
				return token;
			},
			session({ session, token }) {
				if (token.sub) session.user.id = token.sub;
				(session as { sessionVersion?: number }).sessionVersion = typeof token.sessionVersion === 'number' ? token.sessionVersion : -1;
				return session;
			}
		}
	};
}
