/**
 * The basemap (README, "Basemap"). Off by default: with BASEMAP_URL unset no page asks any host but
 * our own for anything. With it set (the second server `npm test` starts: BASEMAP_BASE_URL), the
 * web maps show its tiles under our layers with the attribution, and the page CSP allows images
 * from exactly the tiles' origin. The tile host is a reserved name (.test, RFC 2606) that never
 * resolves: the browser's requests to it are answered here with page routes, from a PNG fixture.
 */
import { mkdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { expect, test, type BrowserContext, type Page } from '@playwright/test';
import type { Knex } from 'knex';
import { createDb } from '../../src/lib/server/db/knex';
import { DEMO_NETWORK } from '../../seeds/demo';
import { baseURL, demoUser, signInPage } from './support';

const TILE = readFileSync(path.resolve(import.meta.dirname, '../fixtures/basemap/tile.png'));
const shots = path.resolve(import.meta.dirname, '../../test-results/basemap');

let db: Knex;
let networkId: number;
let planPath: string;

test.beforeAll(async () => {
	const url = process.env.DATABASE_URL;
	if (!url) throw new Error('DATABASE_URL is not set: run through npm test');
	db = createDb(url, 2);
	const network = await db('networks').select('id').where({ slug: DEMO_NETWORK.slug }).first();
	networkId = network.id;
	const plan = await db('plans as p').join('revisions as r', 'r.id', 'p.revision_id').select('r.id', 'r.proposal_id').where({ 'p.network_id': networkId, 'p.state': 'current' }).first();
	planPath = `/networks/${networkId}/proposals/${plan.proposal_id}/revisions/${plan.id}`;
	mkdirSync(shots, { recursive: true });
});
test.afterAll(async () => db?.destroy());

const directive = (csp: string, name: string) =>
	csp
		.split(';')
		.map((d) => d.trim())
		.find((d) => d.startsWith(name + ' '));

/** Tile x, y of a lon/lat at zoom z in the XYZ scheme (OpenStreetMap wiki, "Slippy map tilenames" [from memory]). */
function tileOf(lon: number, lat: number, z: number): [number, number] {
	const n = 2 ** z;
	const r = (lat * Math.PI) / 180;
	return [Math.floor(((lon + 180) / 360) * n), Math.floor(((1 - Math.log(Math.tan(r) + 1 / Math.cos(r)) / Math.PI) / 2) * n)];
}

/**
 * Waits until the network map has drawn its layers and its importance image has loaded (the first
 * view of a recipe version in EPSG:3857 computes its image: allow for that).
 */
async function mapDrawn(page: Page) {
	await expect(page.getByTestId('network-map').first()).toHaveClass(/leaflet-container/, { timeout: 30_000 });
	await expect.poll(() => page.locator('img.cf-backdrop').first().evaluate((img: HTMLImageElement) => img.complete && img.naturalWidth > 0), { timeout: 30_000 }).toBe(true);
}

test('with BASEMAP_URL set, the web maps show its tiles under our layers, with the attribution and a CSP for that origin alone', async ({ browser }) => {
	test.setTimeout(120_000);
	const base = process.env.BASEMAP_BASE_URL;
	const template = process.env.BASEMAP_URL;
	if (!base || !template) throw new Error('BASEMAP_BASE_URL and BASEMAP_URL are not set: run through npm test');
	const tileOrigin = new URL(template.replace(/\{[zxy]\}/g, '0')).origin;
	const context = await browser.newContext({ baseURL: base, viewport: { width: 1440, height: 1000 } });
	const tiles: string[] = [];
	const elsewhere: string[] = [];
	await context.route(`${tileOrigin}/**`, (route) => {
		tiles.push(route.request().url());
		return route.fulfill({ status: 200, contentType: 'image/png', body: TILE });
	});
	context.on('request', (r) => {
		const u = new URL(r.url());
		if (u.protocol !== 'data:' && u.protocol !== 'blob:' && u.origin !== new URL(base).origin && u.origin !== tileOrigin) elsewhere.push(r.url());
	});
	const page = await context.newPage();
	const cspViolations: string[] = [];
	page.on('console', (m) => {
		if (/Content Security Policy/i.test(m.text())) cspViolations.push(m.text());
	});
	await signInPage(page, demoUser('analyst').email, demoUser('analyst').password);

	// The Map tab: the page CSP names the tiles' origin in img-src and nowhere else.
	const res = await page.goto(`/networks/${networkId}/map`);
	const csp = res!.headers()['content-security-policy'];
	expect(directive(csp, 'img-src')).toBe(`img-src 'self' data: blob: ${tileOrigin}`);
	expect(csp.split(tileOrigin)).toHaveLength(2);
	await mapDrawn(page);
	const loaded = page.locator('.cf-basemap img.leaflet-tile-loaded');
	await expect.poll(() => loaded.count()).toBeGreaterThan(0);
	// Our fixture, drawn by the browser.
	expect(await loaded.first().evaluate((img: HTMLImageElement) => [img.naturalWidth, img.naturalHeight])).toEqual([256, 256]);
	await expect(page.locator('.leaflet-control-attribution').first()).toHaveText('© Test tiles for Cairnfield');
	// The tiles lie under our layers: Leaflet's tile pane below the importance image's pane.
	const z = (sel: string) => page.locator(sel).first().evaluate((el) => Number(getComputedStyle(el).zIndex));
	expect(await z('.leaflet-tile-pane')).toBeLessThan(await z('.leaflet-pane:has(> img.cf-backdrop)'));
	await expect(page.locator('.cf-sensor')).toHaveCount(14);

	// Every tile asked for follows the template, at most at the server's max zoom (18), and the
	// tiles of one zoom level include the one under a demo sensor: our lon/lat and the tiles agree.
	const asked = tiles.map((u) => {
		const m = /^https:\/\/tiles\.basemap\.test\/(\d+)\/(\d+)\/(\d+)\.png$/.exec(u);
		expect(m, u).not.toBeNull();
		return m!.slice(1).map(Number) as [number, number, number];
	});
	for (const [tz, tx, ty] of asked) {
		expect(tz).toBeLessThanOrEqual(18);
		expect(tx).toBeLessThan(2 ** tz);
		expect(ty).toBeLessThan(2 ** tz);
	}
	const sensor = await db('sensors').select('lon', 'lat').where({ network_id: networkId, status: 'active' }).first();
	const zoom = Math.max(...asked.map((t) => t[0]));
	const [sx, sy] = tileOf(Number(sensor.lon), Number(sensor.lat), zoom);
	expect(asked.some(([tz, tx, ty]) => tz === zoom && tx === sx && ty === sy)).toBe(true);
	await page.screenshot({ path: path.join(shots, 'map-desk-basemap.png') });

	// A plan's map (the approved revision) and the Field tasks map: tiles and the attribution too.
	tiles.length = 0;
	await page.goto(planPath);
	await expect(page.getByTestId('comparison-maps').locator('.leaflet-container').first()).toBeVisible({ timeout: 30_000 });
	await expect.poll(() => page.getByTestId('comparison-maps').locator('.cf-basemap img.leaflet-tile-loaded').count()).toBeGreaterThan(0);
	await expect(page.getByTestId('comparison-maps').locator('.leaflet-control-attribution').first()).toHaveText('© Test tiles for Cairnfield');
	await expect(page.locator('.cf-arrow').first()).toBeAttached();
	expect(tiles.length).toBeGreaterThan(0);
	await page.screenshot({ path: path.join(shots, 'plan-desk-basemap.png'), fullPage: true });
	await page.goto(`/networks/${networkId}/tasks`);
	await expect.poll(() => page.locator('.cf-basemap img.leaflet-tile-loaded').count(), { timeout: 30_000 }).toBeGreaterThan(0);
	await expect(page.locator('.leaflet-control-attribution').first()).toHaveText('© Test tiles for Cairnfield');

	// At 360 px: the same, and nothing wider than the screen.
	const phone = await context.newPage();
	await phone.setViewportSize({ width: 360, height: 780 });
	for (const [url, name] of [
		[`/networks/${networkId}/map`, 'map-360-basemap.png'],
		[planPath, 'plan-360-basemap.png']
	] as const) {
		await phone.goto(url);
		await expect.poll(() => phone.locator('.cf-basemap img.leaflet-tile-loaded').count(), { timeout: 30_000 }).toBeGreaterThan(0);
		await expect(phone.locator('.leaflet-control-attribution').first()).toBeVisible();
		expect(await phone.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(360);
		await phone.screenshot({ path: path.join(shots, name), fullPage: true });
	}
	expect(cspViolations).toEqual([]);
	expect(elsewhere).toEqual([]);
	await context.close();
});

test('with BASEMAP_URL set, the public map and the technician’s route become web maps over the tiles; without JavaScript the public map stays the server’s SVG', async ({ browser }) => {
	test.setTimeout(120_000);
	const base = process.env.BASEMAP_BASE_URL;
	const template = process.env.BASEMAP_URL;
	if (!base || !template) throw new Error('BASEMAP_BASE_URL and BASEMAP_URL are not set: run through npm test');
	const tileOrigin = new URL(template.replace(/\{[zxy]\}/g, '0')).origin;
	const api = await browser.newContext({ baseURL: base });
	const withRadius = (await (await api.request.get(`/api/v1/public/networks/${DEMO_NETWORK.slug}`)).json()).sites as { radiusM: number }[];
	await api.close();

	for (const width of [1440, 360]) {
		const anon = await browser.newContext({ baseURL: base, viewport: { width, height: width === 360 ? 780 : 1000 } });
		let tiles = 0;
		await anon.route(`${tileOrigin}/**`, (route) => {
			tiles++;
			return route.fulfill({ status: 200, contentType: 'image/png', body: TILE });
		});
		const page = await anon.newPage();
		await page.goto(`/map/${DEMO_NETWORK.slug}`);
		const web = page.getByTestId('web-map');
		await expect(web).toHaveClass(/leaflet-container/, { timeout: 30_000 });
		await expect(page.getByTestId('static-map')).toHaveCount(0);
		await expect.poll(() => web.locator('.cf-basemap img.leaflet-tile-loaded').count()).toBeGreaterThan(0);
		await expect(web.locator('.leaflet-control-attribution')).toHaveText('© Test tiles for Cairnfield');
		// One disk per site with a sensing radius, drawn as a polygon; the importance overlay loaded.
		await expect(web.locator('path.cf-disk')).toHaveCount(withRadius.filter((s) => s.radiusM > 0).length);
		await expect.poll(() => web.locator('img.cf-backdrop').evaluate((img: HTMLImageElement) => img.complete && img.naturalWidth > 0), { timeout: 30_000 }).toBe(true);
		expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(width);
		expect(tiles).toBeGreaterThan(0);
		await page.getByTestId('public-map').locator('figure').scrollIntoViewIfNeeded();
		await page.screenshot({ path: path.join(shots, `public-${width}-basemap.png`) });
		await anon.close();
	}

	// Without JavaScript: the server's SVG map, and no tile asked for.
	const noJs = await browser.newContext({ baseURL: base, javaScriptEnabled: false });
	let tiles = 0;
	await noJs.route(`${tileOrigin}/**`, (route) => {
		tiles++;
		return route.abort();
	});
	const plain = await noJs.newPage();
	await plain.goto(`/map/${DEMO_NETWORK.slug}`);
	await expect(plain.getByTestId('static-map')).toBeVisible();
	await expect(plain.getByTestId('web-map')).toBeHidden();
	await plain.waitForLoadState('networkidle');
	expect(tiles).toBe(0);
	await noJs.close();

	// The technician's route at 360 px: numbered dots over the tiles.
	const tech = await browser.newContext({ baseURL: base, viewport: { width: 360, height: 780 } });
	await tech.route(`${tileOrigin}/**`, (route) => route.fulfill({ status: 200, contentType: 'image/png', body: TILE }));
	const tp = await tech.newPage();
	await signInPage(tp, demoUser('technician').email, demoUser('technician').password);
	await tp.goto(`/networks/${networkId}/field`);
	const route = tp.getByTestId('web-map');
	await expect(route).toHaveClass(/leaflet-container/, { timeout: 30_000 });
	await expect.poll(() => route.locator('.cf-basemap img.leaflet-tile-loaded').count()).toBeGreaterThan(0);
	await expect(route.locator('.cf-web-label').first()).toHaveText(/^\d+$/);
	expect(await tp.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(360);
	await route.scrollIntoViewIfNeeded();
	await tp.screenshot({ path: path.join(shots, 'route-360-basemap.png') });
	await tech.close();
});

/** Records every request of the context (pages and the service worker) that leaves our origin. */
function recordForeign(context: BrowserContext, origin: string): { all: string[]; foreign: string[] } {
	const seen = { all: [] as string[], foreign: [] as string[] };
	context.on('request', (r) => {
		const u = new URL(r.url());
		seen.all.push(r.url());
		if (u.protocol !== 'data:' && u.protocol !== 'blob:' && u.origin !== origin) seen.foreign.push(r.url());
	});
	return seen;
}

test('with BASEMAP_URL unset, no page asks any host but our own: maps, plan, field tasks, route, public map', async ({ browser }) => {
	test.setTimeout(120_000);
	const origin = new URL(baseURL).origin;
	const context = await browser.newContext({ baseURL });
	const seen = recordForeign(context, origin);
	const page = await context.newPage();
	await signInPage(page, demoUser('analyst').email, demoUser('analyst').password);
	const res = await page.goto(`/networks/${networkId}/map`);
	expect(directive(res!.headers()['content-security-policy'], 'img-src')).toBe("img-src 'self' data: blob:");
	await mapDrawn(page);
	await expect(page.locator('.cf-sensor')).toHaveCount(14);
	await expect(page.locator('.cf-basemap')).toHaveCount(0);
	await expect(page.locator('.leaflet-control-attribution')).toHaveCount(0);
	await page.screenshot({ path: path.join(shots, 'map-desk-plain.png') });
	await page.goto(planPath);
	await expect(page.getByTestId('comparison-maps').locator('.leaflet-container').first()).toBeVisible({ timeout: 30_000 });
	await expect(page.locator('.cf-arrow').first()).toBeAttached();
	await page.screenshot({ path: path.join(shots, 'plan-desk-plain.png'), fullPage: true });
	await page.goto(`/networks/${networkId}/tasks`);
	await expect(page.locator('.cf-field-planned').first()).toBeAttached({ timeout: 30_000 });
	const phone = await context.newPage();
	await phone.setViewportSize({ width: 360, height: 780 });
	for (const [url, name] of [
		[`/networks/${networkId}/map`, 'map-360-plain.png'],
		[planPath, 'plan-360-plain.png']
	] as const) {
		await phone.goto(url);
		await mapDrawn(phone);
		await phone.screenshot({ path: path.join(shots, name), fullPage: true });
	}
	await context.close();

	// The technician's route (with its service worker) and the public map, signed out.
	const tech = await browser.newContext({ baseURL, viewport: { width: 360, height: 780 } });
	const techSeen = recordForeign(tech, origin);
	const tp = await tech.newPage();
	await signInPage(tp, demoUser('technician').email, demoUser('technician').password);
	await tp.goto(`/networks/${networkId}/field`);
	await expect(tp.getByTestId('static-map').first()).toBeVisible();
	await tech.close();
	const anon = await browser.newContext({ baseURL });
	const anonSeen = recordForeign(anon, origin);
	const ap = await anon.newPage();
	await ap.goto(`/map/${DEMO_NETWORK.slug}`);
	await expect(ap.getByTestId('public-map')).toBeVisible();
	await ap.waitForLoadState('networkidle');
	await anon.close();

	// The recording saw the pages, their scripts, the map data and the importance images…
	const all = [...seen.all, ...techSeen.all, ...anonSeen.all];
	expect(all.some((u) => /\/map\/importance\.png/.test(u))).toBe(true);
	expect(all.some((u) => /\/_app\/immutable\//.test(u))).toBe(true);
	// …and nothing that left the origin.
	expect([...seen.foreign, ...techSeen.foreign, ...anonSeen.foreign]).toEqual([]);
});
