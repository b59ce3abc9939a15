/** The origin every link in an e-mail is built from: ORIGIN, never a request's headers. */
import { env } from '$env/dynamic/private';

export function appOrigin(): string {
	return (env.ORIGIN ?? `http://127.0.0.1:${env.PORT ?? 3000}`).replace(/\/$/, '');
}
