/**
 * Field work in the running app, on a network built from the demo files with the demo's field
 * stage (a plan whose tasks go to the demo technician, two done, one blocked) and published:
 * the tasks API as named, idempotent updates from two devices on one task, the GPX export against
 * the GPX 1.1 schema's rules, the technician's route in a 360 px window, and the public map's
 * privacy (HTML and JSON searched for every private field).
 */
import { randomBytes, randomUUID } from 'node:crypto';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { expect, test, type APIRequestContext } from '@playwright/test';
import { PNG } from 'pngjs';
import type { Knex } from 'knex';
import { createDb } from '../../src/lib/server/db/knex';
import { createObjectStore } from '../../src/lib/server/storage/create-object-store';
import { DEMO_NETWORK, DEMO_ORGANISATION, DEMO_USERS } from '../../seeds/demo';
import { DEMO_FIELD, seedDemoField } from '../../seeds/demo-field';
import { placementNetwork } from '../helpers/placement-network';
import { checkGpx } from '../helpers/gpx-rules';
import { contextFor, demoDir, demoUser, gotoHydrated, linkIn, signInPage, waitForMail } from './support';

let db: Knex;
let networkId: number;
let slug: string;

interface Task {
	id: number;
	kind: string;
	sensorId: number | null;
	sensorCode: string;
	target: { lon: number; lat: number };
	state: string;
	order: number;
	version: number;
}

test.beforeAll(async () => {
	const url = process.env.DATABASE_URL;
	if (!url) throw new Error('DATABASE_URL is not set: run through npm test');
	db = createDb(url, 2);
	const org = await db('organisations').select('id').where({ slug: DEMO_ORGANISATION.slug }).first();
	const user = (role: string) => db('users').select('id', 'name').where({ email: demoUser(role as 'analyst').email }).first();
	const analyst = await user('analyst');
	const store = createObjectStore(process.env);
	const { network } = await placementNetwork(db, store, org.id, analyst.id, `Field e2e ${randomBytes(3).toString('hex')}`);
	networkId = network.id;
	slug = network.slug;
	const origin = (process.env.ORIGIN ?? process.env.BASE_URL ?? '').replace(/\/$/, '');
	await seedDemoField(db, store, { networkId, analyst, reviewer: await user('reviewer'), technician: await user('technician') }, origin);
	await db('networks').where({ id: networkId }).update({ publication: 'published', public_text: 'Probes of an invented catchment, for the public.' });
});
test.afterAll(async () => db?.destroy());

const tasksOf = async (ctx: APIRequestContext, query = '?assignee=me'): Promise<Task[]> => {
	const res = await ctx.get(`/api/v1/networks/${networkId}/tasks${query}`);
	expect(res.status()).toBe(200);
	return (await res.json()).tasks;
};

test('the tasks API as named; two devices on one task: nothing lost, nothing twice, the conflict told', async () => {
	const tech = await contextFor('technician');
	const tasks = await tasksOf(tech);
	expect(tasks.length).toBeGreaterThan(3);
	expect(tasks[0]).toMatchObject({ id: expect.any(Number), kind: expect.stringMatching(/^(move|install|remove)$/), target: { lon: expect.any(Number), lat: expect.any(Number) }, state: 'done', order: 1 });
	expect(tasks.map((t) => t.order)).toEqual(tasks.map((_, i) => i + 1));
	expect(tasks[2].state).toBe('blocked');
	expect((await tech.get(`/api/v1/networks/${networkId}/tasks`)).status()).toBe(403);

	const open = tasks.find((t) => t.state === 'open')!;
	const url = `/api/v1/networks/${networkId}/tasks/${open.id}/updates`;
	const deviceA = tech;
	const deviceB = await contextFor('technician');
	const keyA = randomUUID();
	const keyB = randomUUID();
	// Both devices saw the task open and start it; A syncs first.
	const a1 = await deviceA.post(url, { data: { state: 'started', fromState: 'open' }, headers: { 'idempotency-key': keyA } });
	expect(a1.status()).toBe(200);
	const b1 = await deviceB.post(url, { data: { state: 'started', fromState: 'open' }, headers: { 'idempotency-key': keyB } });
	expect(b1.status()).toBe(409);
	expect(await b1.json()).toMatchObject({ error: { code: 'conflict' }, task: { state: 'started' } });
	// A's request is sent again (lost answer): the same result, applied once.
	const a2 = await deviceA.post(url, { data: { state: 'started', fromState: 'open' }, headers: { 'idempotency-key': keyA } });
	expect(a2.status()).toBe(200);
	expect((await a2.json()).task.version).toBe((await a1.json()).task.version);
	expect(await db('field_task_updates').where({ task_id: open.id })).toHaveLength(2); // A's once, B's conflict once
	// Done with a typed position; the inventory follows.
	const at = { lon: open.target.lon + 0.00002, lat: open.target.lat, accuracyM: 5 };
	const done = await deviceB.post(url, { data: { state: 'done', fromState: 'started', position: at, note: 'Done from device B.' }, headers: { 'idempotency-key': randomUUID() } });
	expect(done.status()).toBe(200);
	if (open.sensorId) {
		const sensor = await (await deviceA.get(`/api/v1/networks/${networkId}/sensors/${open.sensorId}`)).json();
		expect(JSON.stringify(sensor)).toContain(String(at.lon));
	}
	const late = await deviceA.post(url, { data: { state: 'blocked', reason: 'Too late', fromState: 'started' }, headers: { 'idempotency-key': randomUUID() } });
	expect(late.status()).toBe(409);
	await deviceB.dispose();
	await tech.dispose();
});

test('the analyst assigns a task; the technician gets an e-mail with a link from the origin', async () => {
	const analyst = await contextFor('analyst');
	const all = await tasksOf(analyst, '');
	const open = all.find((t) => t.state === 'open')!;
	const since = Date.now();
	const tech = await db('users').select('id').where({ email: demoUser('technician').email }).first();
	const res = await analyst.post(`/api/v1/networks/${networkId}/tasks/assignments`, { data: { taskIds: [open.id], assigneeId: tech.id } });
	expect(res.status()).toBe(200);
	const mail = await waitForMail(demoUser('technician').email, /Field tasks in .*1 assigned/, since);
	expect(linkIn(mail)).toBe(`${process.env.ORIGIN ?? process.env.BASE_URL}/networks/${networkId}/field`.replace(/([^:])\/\//, '$1/'));
	expect((await analyst.post(`/api/v1/networks/${networkId}/tasks/assignments`, { data: { taskIds: [open.id], assigneeId: 999999 } })).status()).toBe(400);
	await analyst.dispose();
});

test('the GPX export meets the GPX 1.1 schema’s rules and lists the route in order', async () => {
	const tech = await contextFor('technician');
	const res = await tech.get(`/api/v1/networks/${networkId}/tasks.gpx?assignee=me`);
	expect(res.status()).toBe(200);
	expect(res.headers()['content-type']).toContain('application/gpx+xml');
	const gpx = checkGpx(await res.text());
	expect(gpx.broken).toEqual([]);
	const active = (await tasksOf(tech)).filter((t) => ['open', 'started', 'blocked'].includes(t.state));
	expect(gpx.waypoints.map((w) => w.name)).toEqual(active.map((t) => expect.stringMatching(new RegExp(`^${t.order}\\. \\w+ ${t.sensorCode}$`))));
	expect(gpx.routePoints).toHaveLength(active.length);
	await tech.dispose();
});

test('in a 360 px window the technician reads the cautions, sees the route in order and finishes a task', async ({ browser }) => {
	const context = await browser.newContext({ viewport: { width: 360, height: 780 }, geolocation: { longitude: 10.11, latitude: 52.9, accuracy: 8 }, permissions: ['geolocation'] });
	const page = await context.newPage();
	const u = demoUser('technician');
	await signInPage(page, u.email, u.password);
	await gotoHydrated(page, `/networks/${networkId}/field`);
	await expect(page.getByTestId('cautions')).toContainText('utility-locate service');
	await page.screenshot({ path: '/tmp/field-360-cautions.png', fullPage: false });
	await page.getByRole('button', { name: 'I have read the cautions' }).click();
	await expect(page.getByTestId('cautions-acknowledged')).toBeVisible();
	// Stored for the technician (not in a cookie of this browser), with an audit entry: a second
	// device of theirs does not ask again today.
	const technician = await db('users').select('id').where({ email: u.email }).first();
	const acks = await db('field_caution_acknowledgements').select(db.raw("DATE_FORMAT(day, '%Y-%m-%d') AS day"), 'acknowledged_at').where({ network_id: networkId, user_id: technician.id });
	expect(acks).toHaveLength(1);
	expect(acks[0].day).toBe(new Date().toISOString().slice(0, 10));
	expect(await db('audit_log').where({ action: 'cautions.acknowledge', object_id: networkId, actor_user_id: technician.id })).toHaveLength(1);
	const other = await browser.newContext({ viewport: { width: 360, height: 780 } });
	const otherPage = await other.newPage();
	await signInPage(otherPage, u.email, u.password);
	await gotoHydrated(otherPage, `/networks/${networkId}/field`);
	await expect(otherPage.getByTestId('cautions-acknowledged')).toBeVisible();
	await expect(otherPage.getByTestId('cautions')).toHaveCount(0);
	await other.close();
	const cards = page.getByTestId('task-card');
	await expect(cards.first()).toContainText('Done');
	await expect(page.locator('[data-testid="task-card"][data-state="blocked"]')).toContainText(DEMO_FIELD.blockedReason);
	const orders = await page.locator('[data-testid="task-card"] h2 span').allTextContents();
	expect(orders.map(Number)).toEqual(orders.map((_, i) => i + 1));
	await expect(page.getByTestId('from-here').first()).toContainText(/\d+(\.\d+)? k?m \d+° [NESW]+/);
	// No horizontal scrolling; touch targets at least 44 px high (WCAG 2.5.5 target size, 44 × 44 CSS px).
	expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(360);
	const heights = await page.locator('[data-testid="route-list"] button, [data-testid="route-list"] a.btn-quiet').evaluateAll((els) => els.filter((e) => (e as HTMLElement).offsetParent).map((e) => e.getBoundingClientRect().height));
	expect(Math.min(...heights)).toBeGreaterThanOrEqual(44);
	await expect(page.locator('a[href^="geo:"]').first()).toBeVisible();
	await page.screenshot({ path: '/tmp/field-360-route.png', fullPage: true });

	const card = page.locator('[data-testid="task-card"][data-state="open"]').first();
	const id = await card.getAttribute('data-task-id');
	await card.getByRole('button', { name: 'Start' }).click();
	const started = page.locator(`[data-task-id="${id}"]`);
	await expect(started).toHaveAttribute('data-state', 'started');
	await started.getByRole('button', { name: /Use my GPS position/ }).click();
	await expect(started.getByLabel('Latitude')).toHaveValue('52.9000000');
	await started.getByLabel('Note (optional)').fill('Set in the lee of the wall.');
	await started.getByRole('button', { name: 'Done' }).click();
	await expect(page.locator(`[data-task-id="${id}"]`)).toHaveAttribute('data-state', 'done');
	await expect(page.locator(`[data-task-id="${id}"]`)).toContainText('flagged for the analyst');
	await page.screenshot({ path: '/tmp/field-360-done.png', fullPage: false });
	await context.close();
});

test('photos: the phone resizes a camera photo to 1600 px JPEG before sending; other content is refused leaving nothing; the analyst sees it', async ({ browser }) => {
	const context = await browser.newContext({ viewport: { width: 360, height: 780 } });
	const page = await context.newPage();
	const u = demoUser('technician');
	await signInPage(page, u.email, u.password);
	await gotoHydrated(page, `/networks/${networkId}/field`);
	const card = page.locator('[data-testid="task-card"][data-state="blocked"]').first();
	const taskId = Number(await card.getAttribute('data-task-id'));
	// A 2400 × 1200 PNG (pngjs, a library we did not write): resized on the phone it becomes 1600 × 800.
	const png = new PNG({ width: 2400, height: 1200 });
	for (let i = 0; i < png.data.length; i += 4) png.data.set([(i / 4) % 251, 120, 60, 255], i);
	await card.getByTestId('photo-input').setInputFiles({ name: 'field.png', mimeType: 'image/png', buffer: PNG.sync.write(png) });
	await expect(card.getByText('Photo saved.')).toBeVisible();
	await expect(card.locator('img')).toHaveCount(1);
	expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(360);
	await card.screenshot({ path: '/tmp/field-360-photo.png' });
	await context.close();
	const rows = await db('field_task_photos').where({ task_id: taskId });
	expect(rows).toHaveLength(1);
	expect(rows[0]).toMatchObject({ content_type: 'image/jpeg', width: 1600, height: 800 });

	// The API refuses a GIF ("GIF89a", GIF89a spec §17) with a clear message; no row is added. (The
	// route's body limit is checked in tests/unit/security/body-limit.test.ts.)
	const tech = await contextFor('technician');
	const url = `/api/v1/networks/${networkId}/tasks/${taskId}/photos`;
	const gif = Buffer.from([0x47, 0x49, 0x46, 0x38, 0x39, 0x61, 1, 0, 1, 0, 0, 0, 0, 0x3b]);
	const refused = await tech.post(url, { data: gif, headers: { 'content-type': 'image/jpeg' } });
	expect(refused.status()).toBe(415);
	expect((await refused.json()).error.message).toContain('JPEG and PNG');
	expect(await db('field_task_photos').where({ task_id: taskId })).toHaveLength(1);
	// The stored photo is served to the technician as the JPEG its row says.
	const served = await tech.get(`${url}/${rows[0].id}`);
	expect(served.status()).toBe(200);
	expect(served.headers()['content-type']).toBe('image/jpeg');
	expect([...(await served.body()).subarray(0, 3)]).toEqual([0xff, 0xd8, 0xff]); // JPEG SOI + marker (ITU-T T.81, B.1.1.3)
	await tech.dispose();

	// The analyst's Field tasks tab: the photo beside its task, and planned against installed on the map.
	const analyst = await browser.newContext();
	const ap = await analyst.newPage();
	const a = demoUser('analyst');
	await signInPage(ap, a.email, a.password);
	await gotoHydrated(ap, `/networks/${networkId}/tasks`);
	await expect(ap.getByTestId('task-photos-cell').locator('img')).toHaveCount(1);
	const installed = await db('field_tasks').where({ network_id: networkId, state: 'done' }).whereNotNull('installed_lon').count({ n: '*' }).first();
	await expect(ap.locator('.cf-field-installed')).toHaveCount(Number(installed!.n));
	await expect(ap.getByTestId('field-offsets').locator('li')).toHaveCount(Number(installed!.n));
	await ap.screenshot({ path: '/tmp/field-tasks-tab.png', fullPage: true });
	await analyst.close();
});

test('the public map needs no sign-in and shows nothing private, in its HTML or its JSON', async ({ page }) => {
	const anon = await contextFor(null);
	const html = await (await anon.get(`/map/${slug}`, { headers: { accept: 'text/html' } })).text();
	const jsonRes = await anon.get(`/api/v1/public/networks/${slug}`);
	expect(jsonRes.status()).toBe(200);
	const json = await jsonRes.text();
	expect(html).toContain('<title>');
	expect(html).toMatch(/<meta name="description" content="Probes of an invented catchment/);
	expect(html).toContain(`/map/${slug}`);
	expect(JSON.parse(json).plan.approvedAt).toEqual(expect.any(String));

	// Every private field of the demo: people, e-mail addresses, serial numbers, sensor codes and notes,
	// drafts (proposal titles, descriptions, choice notes, review comments), tasks (notes, reasons), photos.
	const csv = readFileSync(path.join(demoDir, 'sensors.csv'), 'utf8').trim().split('\n').slice(1).map((l) => l.split(','));
	const privateValues = [
		...DEMO_USERS.flatMap((u) => [u.email, u.name]),
		...csv.map((c) => c[1]).filter(Boolean),
		...csv.map((c) => c[0]),
		...csv.map((c) => c[7]).filter((v) => v && v.length > 3),
		...(await db('proposals').select('title', 'description', 'choice_note').where({ network_id: networkId })).flatMap((p) => [p.title, p.description, p.choice_note]).filter((v) => v && v.length > 3),
		...(await db('reviews as r').join('revisions as v', 'v.id', 'r.revision_id').select('r.comment').where('v.network_id', networkId)).map((r) => r.comment).filter((v) => v && v.length > 3),
		...(await db('field_tasks').select('note', 'blocked_reason').where({ network_id: networkId })).flatMap((t) => [t.note, t.blocked_reason]).filter((v) => v && v.length > 3),
		...(await db('sensors').select('serial', 'code').where({ network_id: networkId })).flatMap((s) => [s.serial, s.code]).filter(Boolean),
		DEMO_FIELD.blockedReason,
		...(await db('field_task_photos').select('object_key', 'id', 'task_id').where({ network_id: networkId })).flatMap((p) => [p.object_key, `/tasks/${p.task_id}/photos/${p.id}`])
	];
	const esc = (s: string) => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/'/g, '&#39;').replace(/"/g, '&quot;');
	for (const v of new Set(privateValues)) {
		expect(html, `HTML shows "${v}"`).not.toContain(v);
		expect(html, `HTML shows "${v}"`).not.toContain(esc(v));
		expect(json, `JSON shows "${v}"`).not.toContain(v);
	}
	for (const word of ['photo', 'assignee', 'serial', '"note', 'task']) expect(json.toLowerCase()).not.toContain(word);

	// Readable without JavaScript: the map and the summary are in the server's HTML.
	expect(html).toContain('data-testid="static-map"');
	expect(html).toContain('data-testid="coverage-summary"');
	await page.goto(`/map/${slug}`);
	await expect(page).toHaveTitle(/sensor network map/);
	await expect(page.getByTestId('share-link')).toHaveAttribute('href', new RegExp(`/map/${slug}$`));
	await page.screenshot({ path: '/tmp/public-map.png', fullPage: true });

	// Unpublished or unknown: 404.
	await db('networks').where({ id: networkId }).update({ publication: 'private' });
	expect((await anon.get(`/map/${slug}`, { headers: { accept: 'text/html' } })).status()).toBe(404);
	expect((await anon.get(`/api/v1/public/networks/${slug}`)).status()).toBe(404);
	expect((await anon.get('/api/v1/public/networks/no-such-network')).status()).toBe(404);
	await db('networks').where({ id: networkId }).update({ publication: 'published' });
	await anon.dispose();
});

test('the demo on a fresh start: the demo technician has a route with tasks done and one blocked, and the public map works', async () => {
	const tech = await contextFor('technician');
	const networks = (await (await tech.get('/api/v1/networks')).json()).networks as { id: number; slug: string }[];
	const demo = networks.find((n) => n.slug === DEMO_NETWORK.slug)!;
	const res = await tech.get(`/api/v1/networks/${demo.id}/tasks?assignee=me`);
	const tasks = (await res.json()).tasks as Task[];
	expect(tasks.filter((t) => t.state === 'done').length).toBeGreaterThanOrEqual(2);
	expect(tasks.filter((t) => t.state === 'blocked')).toHaveLength(1);
	const anon = await contextFor(null);
	const map = await anon.get(`/api/v1/public/networks/${DEMO_NETWORK.slug}`);
	expect(map.status()).toBe(200);
	const body = await map.json();
	expect(body.plan.approvedAt).toEqual(expect.any(String));
	// The demo's two cosmic-ray neutron sensors (footprint radius about 130–240 m, Köhli et al. 2015)
	// have their own symbol and legend entry; their disks are drawn to the map's scale.
	const area = (body.sites as { footprint: string; radiusM: number }[]).filter((x) => x.footprint === 'area');
	expect(area).toHaveLength(2);
	expect(body.sensorTypes.filter((x: { footprint: string }) => x.footprint === 'area').map((x: { name: string }) => x.name)).toEqual(['cosmic-ray neutron sensor']);
	const html = await (await anon.get(`/map/${DEMO_NETWORK.slug}`, { headers: { accept: 'text/html' } })).text();
	expect(html.match(/data-symbol="area"/g)).toHaveLength(2);
	expect(html).toMatch(/<li[^>]*data-footprint="area"[^>]*>[\s\S]*?cosmic-ray neutron sensor, large footprint/);
	// SVG units per metre: the drawing is 1000 units across the map's extent (StaticMapSvg).
	const unitsPerM = 1000 / (body.extent[2] - body.extent[0]);
	const radii = [...html.matchAll(/<circle[^>]*\sr="([\d.]+)"[^>]*data-footprint="area"/g)].map((x) => Number(x[1]));
	expect(radii).toHaveLength(2);
	// Written with one decimal: within 0.05 units of the true radius.
	for (const r of radii) expect(Math.abs(r - area[0].radiusM * unitsPerM)).toBeLessThanOrEqual(0.05 + 1e-9);
	await anon.dispose();
	await tech.dispose();
});

test('the printable task sheet lists the route with the cautions; printed, it shows no page chrome', async ({ browser }) => {
	const context = await browser.newContext();
	const page = await context.newPage();
	const u = demoUser('technician');
	await signInPage(page, u.email, u.password);
	await page.goto(`/networks/${networkId}/field/print`);
	const tech = await contextFor('technician');
	const tasks = (await tasksOf(tech)).filter((t) => t.state !== 'cancelled');
	await expect(page.locator('[data-testid="sheet-table"] tbody tr')).toHaveCount(tasks.length);
	await expect(page.getByTestId('task-sheet')).toContainText('utility-locate service');
	await expect(page.locator('[data-testid="sheet-table"] tbody tr').first()).toContainText(`${tasks[0].target.lat.toFixed(6)}, ${tasks[0].target.lon.toFixed(6)}`);
	await page.emulateMedia({ media: 'print' });
	await expect(page.getByRole('button', { name: 'Print' })).toBeHidden();
	await expect(page.locator('footer')).toBeHidden();
	await expect(page.locator('[role="tablist"]')).toBeHidden();
	await expect(page.getByRole('heading', { name: /^Task sheet/ })).toBeVisible();
	await page.screenshot({ path: '/tmp/field-print.png', fullPage: true });
	await tech.dispose();
	await context.close();
});

test('every technician page fits a 360 px screen: no horizontal scrolling, no element wider than the viewport', async ({ browser }) => {
	const context = await browser.newContext({ viewport: { width: 360, height: 780 } });
	const page = await context.newPage();
	const u = demoUser('technician');
	await signInPage(page, u.email, u.password);
	const pages = ['/networks', `/networks/${networkId}`, `/networks/${networkId}/field`, `/networks/${networkId}/field/print`, '/profile', `/map/${slug}`];
	for (const path of pages) {
		const res = await page.goto(path);
		expect(res?.status(), path).toBe(200);
		const width = await page.evaluate(() => document.documentElement.scrollWidth);
		// Elements whose box reaches past the right edge (visible ones; the drawing inside an SVG is
		// clipped to the SVG's own box, so only the SVG counts).
		const wide = await page.evaluate(() =>
			[...document.querySelectorAll('body *')]
				.filter((e) => {
					if (e.parentElement?.closest('svg')) return false;
					const r = e.getBoundingClientRect();
					return r.width > 0 && r.right > innerWidth + 0.5 && getComputedStyle(e).visibility !== 'hidden';
				})
				.map((e) => `${e.tagName.toLowerCase()}.${[...e.classList].join('.')} ${Math.round(e.getBoundingClientRect().right)}px`)
				.slice(0, 5)
		);
		expect(wide, path).toEqual([]);
		expect(width, path).toBeLessThanOrEqual(360);
	}
	// The public map's scale label is readable on the phone: text at least 12 CSS px tall (a common
	// floor for legible body text on phones; common practice, no source).
	await page.goto(`/map/${slug}`);
	const label = await page.locator('[data-testid="static-map"] .scale-label').boundingBox();
	expect(label!.height).toBeGreaterThanOrEqual(12);
	await page.goto(`/networks/${networkId}/field/print`);
	await page.screenshot({ path: '/tmp/field-360-print.png', fullPage: true });
	await context.close();
});
