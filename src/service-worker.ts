/// <reference types="@sveltejs/kit" />
/// <reference no-default-lib="true"/>
/// <reference lib="esnext" />
/// <reference lib="webworker" />
/**
 * The technician's route works with no signal: the app's own files are precached, the route page
 * (its HTML and its data) is served from the network when there is one and from the last copy when
 * not, and the route map's importance backdrop is kept. Task updates made offline wait in IndexedDB
 * (lib/field/offline-queue.ts) and are sent by the page when the connection returns.
 */
import { build, files, version } from '$service-worker';
import { precacheAndRoute, cleanupOutdatedCaches } from 'workbox-precaching';
import { registerRoute } from 'workbox-routing';
import { NetworkFirst, StaleWhileRevalidate } from 'workbox-strategies';
import { ExpirationPlugin } from 'workbox-expiration';
import { FIELD_CACHES, isFieldPage, isFieldApi, isRouteBackdrop } from '$lib/field/offline-routes';

const sw = self as unknown as ServiceWorkerGlobalScope;

precacheAndRoute([...build, ...files].map((url) => ({ url, revision: version })));
cleanupOutdatedCaches();

// The route page and its data (__data.json when navigating inside the app). Only 200 answers are
// kept (workbox's default), so a sign-in redirect never replaces the last good copy.
registerRoute(
	({ url, request }) => request.method === 'GET' && url.origin === sw.location.origin && isFieldPage(url.pathname),
	new NetworkFirst({ cacheName: FIELD_CACHES.pages, networkTimeoutSeconds: 5, plugins: [new ExpirationPlugin({ maxEntries: 30, maxAgeSeconds: 14 * 24 * 3600 })] })
);
registerRoute(
	({ url, request }) => request.method === 'GET' && url.origin === sw.location.origin && isFieldApi(url.pathname),
	new NetworkFirst({ cacheName: FIELD_CACHES.api, networkTimeoutSeconds: 5, plugins: [new ExpirationPlugin({ maxEntries: 30, maxAgeSeconds: 14 * 24 * 3600 })] })
);
registerRoute(
	({ url, request }) => request.method === 'GET' && url.origin === sw.location.origin && isRouteBackdrop(url.pathname),
	new StaleWhileRevalidate({ cacheName: FIELD_CACHES.backdrops, plugins: [new ExpirationPlugin({ maxEntries: 20, maxAgeSeconds: 14 * 24 * 3600 })] })
);

sw.addEventListener('install', () => void sw.skipWaiting());
sw.addEventListener('activate', (event) => event.waitUntil(sw.clients.claim()));
// Signing out empties the kept copies, so the next person on a shared phone sees nothing of them.
sw.addEventListener('message', (event) => {
	if (event.data?.type === 'clear-field-caches') event.waitUntil(Promise.all(Object.values(FIELD_CACHES).map((name) => caches.delete(name))));
});
