import type { Actor } from '$lib/server/auth/actor';

declare global {
	namespace App {
		interface Locals {
			actor: Actor | null;
		}
		interface Error {
			message: string;
			code?: string;
		}
	}
}

export {};
