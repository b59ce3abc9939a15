/**
 * The app's server entry: adapter-node's own server (build/index.js: listening, graceful shutdown)
 * with the security headers set on every response before anything else answers. SvelteKit's hook
 * sets them too, but static files (/_app/immutable/…, /favicon.svg) are served before any hook runs.
 *
 *   node src/ops/serve.mjs        (from the project folder, after `npm run build`)
 */
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { FALLBACK_CSP, SECURITY_HEADERS, SERVICE_WORKER_CSP } from '../lib/server/http/security-headers.js';

const root = path.resolve(import.meta.dirname, '../..');
const { server } = await import(pathToFileURL(path.join(root, 'build', 'index.js')).href);

// Runs before the app's own listener; SvelteKit's page CSP, when it sets one, replaces the fallback.
server.server.prependListener('request', (req, res) => {
	for (const [name, value] of Object.entries(SECURITY_HEADERS)) res.setHeader(name, value);
	res.setHeader('Content-Security-Policy', req.url?.split('?')[0] === '/service-worker.js' ? SERVICE_WORKER_CSP : FALLBACK_CSP);
});
