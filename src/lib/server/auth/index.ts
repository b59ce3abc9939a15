/** Auth.js for SvelteKit: the handle for hooks.server.ts and the sign-in/sign-out form actions. */
import { SvelteKitAuth } from '@auth/sveltekit';
import { authConfig } from './config';

export const { handle: authHandle, signIn, signOut } = SvelteKitAuth(async (event) => authConfig(event));
