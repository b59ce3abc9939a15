/**
 * The technician's route with no signal, in Debian's Chromium at 360 px: the page, its route map's
 * importance backdrop and task updates keep working with the browser context offline; the updates
 * wait in IndexedDB and sync when the context is back online, each under its Idempotency-Key; a
 * second device that changed the same task meanwhile wins, and the first device is shown the
 * conflict. A photo taken offline waits (resized, as a Blob) beside the updates and is sent after the
 * task's update; the cautions read offline are sent too. The database then holds each update, the
 * photo and the day's acknowledgement once, and the inventory is as installed.
 */
import { randomBytes } from 'node:crypto';
import { PNG } from 'pngjs';
import { expect, test, type BrowserContext, type Page } from '@playwright/test';
import type { Knex } from 'knex';
import { createDb } from '../../src/lib/server/db/knex';
import { createObjectStore } from '../../src/lib/server/storage/create-object-store';
import { DEMO_ORGANISATION } from '../../seeds/demo';
import { seedDemoField } from '../../seeds/demo-field';
import { placementNetwork } from '../helpers/placement-network';
import { demoUser, gotoHydrated, signInPage, waitForHydration } from './support';

let db: Knex;
let networkId: number;

test.beforeAll(async () => {
	const url = process.env.DATABASE_URL;
	if (!url) throw new Error('DATABASE_URL is not set: run through npm test');
	db = createDb(url, 2);
	const org = await db('organisations').select('id').where({ slug: DEMO_ORGANISATION.slug }).first();
	const user = (role: 'analyst' | 'reviewer' | 'technician') => db('users').select('id', 'name').where({ email: demoUser(role).email }).first();
	const analyst = await user('analyst');
	const store = createObjectStore(process.env);
	const { network } = await placementNetwork(db, store, org.id, analyst.id, `Offline e2e ${randomBytes(3).toString('hex')}`);
	networkId = network.id;
	const origin = (process.env.ORIGIN ?? process.env.BASE_URL ?? '').replace(/\/$/, '');
	await seedDemoField(db, store, { networkId, analyst, reviewer: await user('reviewer'), technician: await user('technician') }, origin);
});
test.afterAll(async () => db?.destroy());

// The GPS fix the phones report (Playwright's geolocation emulation works with no network too).
const GPS = { longitude: 10.11, latitude: 52.9, accuracy: 8 };

async function phone(browser: import('@playwright/test').Browser): Promise<{ context: BrowserContext; page: Page }> {
	const context = await browser.newContext({ viewport: { width: 360, height: 780 }, geolocation: GPS, permissions: ['geolocation'] });
	const page = await context.newPage();
	const u = demoUser('technician');
	await signInPage(page, u.email, u.password);
	await gotoHydrated(page, `/networks/${networkId}/field`);
	// The service worker takes over (skipWaiting + clients.claim); loading the page once more through it keeps a copy.
	await page.evaluate(async () => void (await navigator.serviceWorker.ready));
	await expect.poll(() => page.evaluate(() => navigator.serviceWorker.controller !== null)).toBe(true);
	await page.reload();
	await waitForHydration(page);
	return { context, page };
}

const card = (page: Page, id: number) => page.locator(`[data-testid="task-card"][data-task-id="${id}"]`);

test('offline for a stretch: the route, its backdrop, the cautions, the updates and a photo keep working; the sync loses nothing, applies nothing twice and shows the conflict', async ({ browser }) => {
	// Two phones, a photo resized in the page and two syncs: about 40 s on an idle machine.
	test.setTimeout(180_000);
	const open = await db('field_tasks').select('id', 'kind', 'sensor_id', 'target_lon', 'target_lat').where({ network_id: networkId, state: 'open' }).whereIn('kind', ['move', 'install']).orderBy('route_order');
	expect(open.length).toBeGreaterThanOrEqual(2);
	const [first, second] = open;
	const before = await db('field_task_updates').count({ n: '*' }).where({ network_id: networkId }).first();

	const a = await phone(browser);
	const backdrop = await a.page.locator('svg image').first().getAttribute('href');
	expect(backdrop).toMatch(/importance\.png$/);

	// No signal: the page still opens (from the service worker's copy), and so does the backdrop.
	await a.context.setOffline(true);
	await a.page.reload();
	await waitForHydration(a.page);
	await expect(a.page.getByTestId('sync-status')).toContainText('Offline');
	await expect(a.page.getByTestId('task-card').first()).toBeVisible();
	expect(await a.page.evaluate((href) => fetch(href!).then((r) => r.status), backdrop)).toBe(200);

	// The cautions of the day, read with no signal: kept on the phone, no longer in the way.
	const technician = await db('users').select('id').where({ email: demoUser('technician').email }).first();
	await expect(a.page.getByTestId('cautions')).toBeVisible();
	await a.page.getByRole('button', { name: 'I have read the cautions' }).click();
	await expect(a.page.getByTestId('cautions')).toHaveCount(0);
	await expect(a.page.getByTestId('cautions-acknowledged')).toContainText('not sent yet');

	// First task: start, then done with the GPS position; second task: start. All wait on the phone.
	await card(a.page, first.id).getByRole('button', { name: 'Start' }).click();
	await expect(card(a.page, first.id)).toHaveAttribute('data-state', 'started');
	await card(a.page, first.id).getByRole('button', { name: /Use my GPS position/ }).click();
	await card(a.page, first.id).getByLabel('Note (optional)').fill('Set offline, by the gate.');
	await card(a.page, first.id).getByRole('button', { name: 'Done' }).click();
	await expect(card(a.page, first.id)).toHaveAttribute('data-state', 'done');
	await card(a.page, second.id).getByRole('button', { name: 'Start' }).click();
	await expect(card(a.page, second.id)).toHaveAttribute('data-state', 'started');
	// A photo of the finished first task (a 2000 × 1000 PNG from pngjs, a library we did not write),
	// resized on the phone to 1600 × 800 JPEG, waits beside the updates.
	const png = new PNG({ width: 2000, height: 1000 });
	for (let i = 0; i < png.data.length; i += 4) png.data.set([(i / 4) % 241, 90, 40, 255], i);
	await card(a.page, first.id).getByTestId('photo-input').setInputFiles({ name: 'gate.png', mimeType: 'image/png', buffer: PNG.sync.write(png) });
	await expect(card(a.page, first.id).getByTestId('photo-waiting')).toHaveCount(1);
	await expect(card(a.page, first.id).getByTestId('photo-waiting')).toContainText('waiting');
	await expect(a.page.getByTestId('waiting-count')).toContainText('3 updates, 1 photo and the cautions read today waiting to be sent');
	await expect(a.page.getByTestId('waiting-count')).toHaveAttribute('data-photos', '1');
	await expect(card(a.page, first.id).getByTestId('task-waiting')).toBeVisible();
	expect(await a.page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(360);
	await a.page.screenshot({ path: '/tmp/field-360-offline.png', fullPage: false });
	await card(a.page, first.id).screenshot({ path: '/tmp/field-360-offline-photo.png' });
	// Nothing reached the server yet.
	expect(await db('field_task_updates').count({ n: '*' }).where({ network_id: networkId }).first()).toEqual(before);
	expect(await db('field_task_photos').where({ task_id: first.id })).toHaveLength(0);
	expect(await db('field_caution_acknowledgements').where({ network_id: networkId, user_id: technician.id })).toHaveLength(0);

	// A second device, online, blocks the second task meanwhile.
	const b = await phone(browser);
	await card(b.page, second.id).getByRole('button', { name: 'Start' }).click();
	await expect(card(b.page, second.id)).toHaveAttribute('data-state', 'started');
	await card(b.page, second.id).getByLabel("Why can't it be done?").fill('Cattle in the field.');
	await card(b.page, second.id).getByRole('button', { name: 'Blocked' }).click();
	await expect(card(b.page, second.id)).toHaveAttribute('data-state', 'blocked');

	// Signal again: the queue syncs in order; the second task's start is refused and shown, not forced.
	await a.context.setOffline(false);
	await expect(a.page.getByTestId('sync-status')).toHaveAttribute('data-waiting', '0');
	await expect(a.page.getByTestId('sync-status')).toContainText('Online');
	const conflict = a.page.getByTestId('sync-conflict');
	await expect(conflict).toHaveCount(1);
	await expect(conflict).toHaveAttribute('data-task-id', String(second.id));
	await expect(conflict).toContainText('Cattle in the field.');
	await expect(card(a.page, first.id)).toHaveAttribute('data-state', 'done');
	await expect(card(a.page, second.id)).toHaveAttribute('data-state', 'blocked');
	await a.page.screenshot({ path: '/tmp/field-360-conflict.png', fullPage: false });

	// Once each: the first task's two updates applied, the second's two from B and A's refused start.
	const rows = await db('field_task_updates').select('task_id', 'from_state', 'to_state', 'status').whereIn('task_id', [first.id, second.id]).orderBy('id');
	expect(rows.filter((r) => r.task_id === first.id).map((r) => [r.from_state, r.to_state])).toEqual([['open', 'started'], ['started', 'done']]);
	expect(rows.filter((r) => r.task_id === second.id)).toHaveLength(3);
	// The photo arrived once, as the resized JPEG, after the update that finished its task.
	await expect(a.page.getByTestId('photo-waiting')).toHaveCount(0);
	await expect(card(a.page, first.id).locator('img')).toHaveCount(1);
	const photos = await db('field_task_photos').select('content_type', 'width', 'height', 'created_at').where({ task_id: first.id });
	expect(photos).toHaveLength(1);
	expect(photos[0]).toMatchObject({ content_type: 'image/jpeg', width: 1600, height: 800 });
	const doneRow = await db('field_task_updates').select('created_at').where({ task_id: first.id, to_state: 'done' }).first();
	expect(photos[0].created_at.getTime()).toBeGreaterThanOrEqual(doneRow.created_at.getTime());
	// The cautions read offline: one acknowledgement for today, with its audit entry.
	const acks = await db('field_caution_acknowledgements').where({ network_id: networkId, user_id: technician.id });
	expect(acks).toHaveLength(1);
	expect(await db('audit_log').where({ action: 'cautions.acknowledge', object_id: networkId, actor_user_id: technician.id })).toHaveLength(1);
	// Loading the page again sends nothing more.
	await a.page.reload();
	await waitForHydration(a.page);
	await expect(a.page.getByTestId('sync-status')).toHaveAttribute('data-waiting', '0');
	expect(Number((await db('field_task_updates').count({ n: '*' }).whereIn('task_id', [first.id, second.id]).first())?.n)).toBe(5);
	expect(await db('field_task_photos').where({ task_id: first.id })).toHaveLength(1);
	// Acknowledged on the server: no cautions in the way on this phone (or any other) today.
	await expect(a.page.getByTestId('cautions')).toHaveCount(0);
	await expect(a.page.getByTestId('cautions-acknowledged')).not.toContainText('not sent yet');

	// The inventory is as installed: the task and its sensor at the phone's GPS position.
	const done = await db('field_tasks').select('state', 'sensor_id', 'installed_lon', 'installed_lat').where({ id: first.id }).first();
	expect(done.state).toBe('done');
	expect([Number(done.installed_lon), Number(done.installed_lat)]).toEqual([GPS.longitude, GPS.latitude]);
	const sensor = await db('sensors').select('lon', 'lat').where({ id: done.sensor_id }).first();
	expect([Number(sensor.lon), Number(sensor.lat)]).toEqual([GPS.longitude, GPS.latitude]);

	// The conflict stays until the technician has seen it.
	await expect(a.page.getByTestId('sync-conflict')).toHaveCount(1);
	await a.page.getByRole('button', { name: 'I have seen this' }).click();
	await expect(a.page.getByTestId('sync-conflict')).toHaveCount(0);
	await a.context.close();
	await b.context.close();
});
