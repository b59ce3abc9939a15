/**
 * The network map: a fresh network of its own, the demo soil-moisture layer and an importance
 * recipe through the API, study area / exclusions / zones / sensors of the demo data inserted
 * straight into the test database (DATABASE_URL), then the Map tab in Chromium.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { randomBytes } from 'node:crypto';
import { expect, test } from '@playwright/test';
import geodesic from 'geographiclib-geodesic';
import proj4 from 'proj4';
import type { Knex } from 'knex';
import { createDb } from '../../src/lib/server/db/knex';
import { enqueueJob } from '../../src/lib/server/jobs/queue';
import { seedDemoInventory } from '../../seeds/demo-inventory';
import { contextFor, demoUser, saveRecipeViaApi, signInPage, uploadLayerViaApi, gotoHydrated } from './support';

const demo = (f: string) => path.resolve(import.meta.dirname, '../../data/demo', f);
/** Ground distance on WGS 84 (GeographicLib, the oracle) between two [lon, lat] points. */
const geodesicM = (a: readonly number[], b: readonly number[]) => geodesic.Geodesic.WGS84.Inverse(a[1], a[0], b[1], b[0]).s12 as number;

interface DemoSensorRow {
	id: string;
	serial: string;
	type: string;
	lon: number;
	lat: number;
	status: string;
}

function demoSensors(): DemoSensorRow[] {
	const [header, ...lines] = readFileSync(demo('sensors.csv'), 'utf8').trim().split(/\r?\n/);
	const cols = header.split(',');
	return lines.map((l) => {
		const v = l.split(',');
		const get = (k: string) => v[cols.indexOf(k)];
		return { id: get('id'), serial: get('serial'), type: get('type'), lon: Number(get('lon')), lat: Number(get('lat')), status: get('status') || 'active' };
	});
}

/** Inserts the demo area, exclusions, zones and sensors of a network directly (test helper). */
async function insertDemoMapRows(db: Knex, networkId: number): Promise<number> {
	const area = JSON.parse(readFileSync(demo('study-area.geojson'), 'utf8'));
	const exclusions = JSON.parse(readFileSync(demo('exclusions.geojson'), 'utf8'));
	const zones = JSON.parse(readFileSync(demo('zones.geojson'), 'utf8')) as { features: { id?: string; properties: { id?: string; name?: string }; geometry: unknown }[] };
	await db('networks').where({ id: networkId }).update({ study_area: JSON.stringify(area.features[0].geometry), exclusions: JSON.stringify(exclusions) });
	await seedDemoInventory(db, networkId);
	const types = new Map<string, number>((await db('sensor_types').select('id', 'name').where({ network_id: networkId })).map((t: { id: number; name: string }) => [t.name, t.id]));
	const sensors = demoSensors();
	for (const s of sensors) {
		await db('sensors').insert({
			network_id: networkId,
			code: s.id,
			serial: s.serial,
			sensor_type_id: types.get(s.type),
			lon: s.lon,
			lat: s.lat,
			position: db.raw('ST_GeomFromText(?, 4326)', [`POINT(${s.lon} ${s.lat})`]),
			status: s.status,
			notes: ''
		});
	}
	const [setId] = await db('zone_sets').insert({ network_id: networkId, name: 'Sub-catchments', kind: 'uploaded' });
	let k = 0;
	for (const f of zones.features) {
		k++;
		await db('zones').insert({ zone_set_id: setId, code: `Z${k}`, name: f.properties.name ?? '', geometry: JSON.stringify(f.geometry), importance_share: 0.25 });
	}
	await db('networks').where({ id: networkId }).update({ zone_set_id: setId });
	return sensors.length;
}

test('the Map tab draws the importance map, sensors, legend, toggles and cursor coordinates', async ({ page }) => {
	const url = process.env.DATABASE_URL;
	if (!url) throw new Error('DATABASE_URL is not set: run through npm test');
	const admin = await contextFor('admin');
	const created = await admin.post('/api/v1/networks', { data: { name: `Map check ${randomBytes(3).toString('hex')}` } });
	expect(created.status()).toBe(201);
	const networkId = (await created.json()).network.id as number;

	// The importance surface through the layers API, as an analyst makes it.
	const analyst = await contextFor('analyst');
	const layerId = (await uploadLayerViaApi(analyst, networkId, { name: 'Soil moisture', kind: 'soil_moisture', units: 'm3/m3', fileName: 'soil-moisture.tif' }, readFileSync(demo('soil-moisture.tif')))).id;
	const versionId = (await saveRecipeViaApi(analyst, networkId, { name: 'Wetness', definition: { layers: [{ layerId: String(layerId), transform: 'minmax', weight: 1 }] } })).id;
	expect((await analyst.post(`/api/v1/networks/${networkId}/recipes/current`, { data: { versionId } })).ok()).toBe(true);

	const db = createDb(url, 1);
	let sensorCount: number;
	try {
		sensorCount = await insertDemoMapRows(db, networkId);
	} finally {
		await db.destroy();
	}

	// The API document, as any member sees it. The importance image is drawn by a job (queued when
	// the version's surface was computed): until it is done the document says so and has the rest.
	const tech = await contextFor('technician');
	const mapDoc = async () => (await (await tech.get(`/api/v1/networks/${networkId}/map`)).json()).map;
	let doc = await mapDoc();
	if (doc.importanceJob) {
		expect(doc.backdrop).toBeNull();
		expect(doc.sensors).toHaveLength(sensorCount);
		// A technician may follow that job through the jobs API.
		const job = await tech.get(`/api/v1/networks/${networkId}/jobs/${doc.importanceJob.id}`);
		expect(job.status()).toBe(200);
		expect((await job.json()).job.kind).toBe('map-importance');
	}
	await expect.poll(async () => (doc = await mapDoc()).importanceJob, { timeout: 60_000 }).toBeNull();
	expect(doc.crs.epsg).toBe(32754);
	expect(doc.sensors).toHaveLength(sensorCount);
	expect(doc.backdrop.kind).toBe('importance');
	expect(doc.contours.length).toBeGreaterThan(0);
	const png = await tech.get(`/api/v1/networks/${networkId}/map/importance.png`);
	expect(png.status()).toBe(200);
	expect(png.headers()['content-type']).toBe('image/png');

	// The page, as a technician.
	const t = demoUser('technician');
	await page.setViewportSize({ width: 1400, height: 900 });
	await signInPage(page, t.email, t.password);
	await gotoHydrated(page, `/networks/${networkId}/map`);
	const mapEl = page.getByTestId('network-map');
	await expect(mapEl).toHaveClass(/leaflet-container/);
	await expect(page.locator('.cf-sensor')).toHaveCount(sensorCount);
	await expect(page.locator('img.cf-backdrop')).toHaveCount(1);
	await expect.poll(() => page.locator('img.cf-backdrop').evaluate((img: HTMLImageElement) => img.complete && img.naturalWidth > 0)).toBe(true);
	await expect(page.locator('path.cf-contour').first()).toBeVisible();
	await expect(page.locator('path.cf-exclusion')).toHaveCount(1);
	await expect(page.locator('path.cf-zone')).toHaveCount(4);
	// One sensing disk per sensor that is not retired.
	await expect(page.locator('path.cf-disk')).toHaveCount(doc.sensors.filter((s: { status: string }) => s.status !== 'retired').length);
	await expect(page.locator('.leaflet-control-scale-line')).toContainText(/\d+ (m|km)/);
	const legend = page.getByTestId('map-legend');
	await expect(legend).toContainText('Importance');
	await expect(legend).toContainText('soil moisture probe');
	await expect(legend).toContainText('cosmic-ray neutron sensor');
	await expect(page.getByTestId('map-summary')).toContainText(`${sensorCount} sensors`);
	await legend.screenshot({ path: '/tmp/map-app-legend.png' });

	// Toggle the sensors off and on again.
	const toggle = page.getByTestId('map-toggles').getByLabel('Sensors', { exact: true });
	await toggle.uncheck();
	await expect(page.locator('.cf-sensor')).toHaveCount(0);
	await toggle.check();
	await expect(page.locator('.cf-sensor')).toHaveCount(sensorCount);

	// Cursor coordinates: lon/lat and working-CRS metres.
	const box = (await mapEl.boundingBox())!;
	await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
	await page.mouse.move(box.x + box.width / 2 + 10, box.y + box.height / 2 + 5);
	const coords = page.getByTestId('cursor-coords');
	await expect(coords).toContainText(/lon \d+\.\d{5}° E, lat \d+\.\d{5}° S/);
	await expect(coords).toContainText(/EPSG:32754 x [\d\u2009]+ m, y [\d\u2009]+ m/);
	await page.screenshot({ path: '/tmp/map-app-map.png' });

	// A popup on a sensor.
	await page.locator('.cf-sensor').first().click();
	await expect(page.locator('.leaflet-popup-content')).toContainText('Serial');
	await expect(page.locator('.leaflet-popup')).toHaveCSS('opacity', '1');
	await page.screenshot({ path: '/tmp/map-app-popup.png' });

	// Zoomed in on a neutron sensor (square): its 150 m disk is a true circle; the scale bar follows.
	await page.locator('.leaflet-popup-close-button').click();
	await expect(page.locator('.leaflet-popup')).toHaveCount(0);
	const square = page.locator('.cf-sensor rect').first();
	const sq = (await square.boundingBox())!;
	const scaleBefore = await page.locator('.leaflet-control-scale-line').textContent();
	await page.mouse.move(sq.x + sq.width / 2, sq.y + sq.height / 2);
	for (let k = 0; k < 6; k++) await page.mouse.wheel(0, -400);
	await expect(page.locator('.leaflet-control-scale-line')).not.toHaveText(scaleBefore ?? '');
	await expect(page.locator('.leaflet-zoom-anim')).toHaveCount(0);
	await page.screenshot({ path: '/tmp/map-app-zoomed.png' });

	// The overview's small map.
	await gotoHydrated(page, `/networks/${networkId}`);
	await expect(page.getByTestId('network-map')).toHaveClass(/leaflet-container/);
	await expect(page.locator('.cf-sensor')).toHaveCount(sensorCount);
	await page.screenshot({ path: '/tmp/map-app-overview.png' });
});

test('an analyst draws a named exclusion on the map; a technician has no Draw control', async ({ page }) => {
	const admin = await contextFor('admin');
	const created = await admin.post('/api/v1/networks', { data: { name: `Map draw ${randomBytes(3).toString('hex')}` } });
	expect(created.status()).toBe(201);
	const networkId = (await created.json()).network.id as number;

	// The demo study area and its one exclusion through the area API, as an analyst would upload them.
	const analyst = await contextFor('analyst');
	const area = JSON.parse(readFileSync(demo('study-area.geojson'), 'utf8'));
	const exclusions = JSON.parse(readFileSync(demo('exclusions.geojson'), 'utf8'));
	const before = (await (await analyst.get(`/api/v1/networks/${networkId}/area`)).json()).area;
	const set = await analyst.post(`/api/v1/networks/${networkId}/area`, { data: { version: before.version, studyArea: area, exclusions: exclusions.features } });
	expect(set.status()).toBe(200);
	const docBefore = (await (await analyst.get(`/api/v1/networks/${networkId}/map`)).json()).map;
	expect(docBefore.crs).not.toBeNull();
	const ringsBefore = docBefore.exclusions.length as number;

	// A technician sees the map without the Draw control.
	const t = demoUser('technician');
	await page.setViewportSize({ width: 1400, height: 900 });
	await signInPage(page, t.email, t.password);
	await gotoHydrated(page, `/networks/${networkId}/map`);
	await expect(page.getByTestId('network-map')).toHaveClass(/leaflet-container/);
	await expect(page.getByTestId('map-legend')).toBeVisible();
	await expect(page.getByTestId('map-draw')).toHaveCount(0);
	await expect(page.getByRole('button', { name: 'Draw exclusion' })).toHaveCount(0);
	await page.context().clearCookies();

	// The analyst draws a triangle named "test pit".
	const a = demoUser('analyst');
	await signInPage(page, a.email, a.password);
	await gotoHydrated(page, `/networks/${networkId}/map`);
	const mapEl = page.getByTestId('network-map');
	await expect(mapEl).toHaveClass(/leaflet-container/);
	const draw = page.getByTestId('map-draw');
	await draw.getByRole('button', { name: 'Draw exclusion' }).click();
	await draw.getByLabel('Name of the exclusion').fill('test pit');
	const finish = draw.getByRole('button', { name: 'Close the outline' });
	await expect(finish).toBeDisabled();
	const box = (await mapEl.boundingBox())!;
	const cx = box.x + box.width / 2;
	const cy = box.y + box.height / 2;
	// What the cursor read-out says at the first two corners (lon/lat and working-CRS metres).
	const readAt = async (x: number, y: number) => {
		await page.mouse.move(x, y);
		const text = (await page.getByTestId('cursor-coords').textContent()) ?? '';
		const m = /lon ([\d.]+)° ([EW]), lat ([\d.]+)° ([NS]).*x ([\d\u2009]+) m, y ([\d\u2009]+) m/s.exec(text);
		expect(m, text).not.toBeNull();
		const num = (v: string) => Number(v.replace(/\u2009/g, ''));
		return { lon: num(m![1]) * (m![2] === 'W' ? -1 : 1), lat: num(m![3]) * (m![4] === 'S' ? -1 : 1), x: num(m![5]), y: num(m![6]) };
	};
	const first = await readAt(cx - 60, cy + 40);
	const second = await readAt(cx + 70, cy + 50);
	const scaleLine = page.locator('.leaflet-control-scale-line');
	const scaleText = (await scaleLine.textContent()) ?? '';
	const scaleMetres = Number(/[\d.]+/.exec(scaleText)![0]) * (scaleText.includes('km') ? 1000 : 1);
	const scalePx = (await scaleLine.boundingBox())!.width;
	await page.mouse.click(cx - 60, cy + 40);
	await page.mouse.click(cx + 70, cy + 50);
	await expect(page.locator('path.cf-draft-vertex')).toHaveCount(2);
	// Removing the last corner takes it back; it is clicked again.
	await draw.getByRole('button', { name: 'Remove the last corner' }).click();
	await expect(page.locator('path.cf-draft-vertex')).toHaveCount(1);
	await page.mouse.click(cx + 70, cy + 50);
	await page.mouse.click(cx + 10, cy - 70);
	await expect(page.locator('path.cf-draft-vertex')).toHaveCount(3);
	await expect(page.locator('path.cf-draft-outline')).toHaveCount(1);
	await expect(draw).toContainText('3 corners so far');
	await page.screenshot({ path: '/tmp/map-app-draw.png' });
	await finish.click();
	await expect(draw.getByRole('status').filter({ hasText: 'saved' })).toContainText('Exclusion “test pit” saved (2 exclusions in all)');
	await expect(page.locator('path.cf-draft-vertex')).toHaveCount(0);
	await expect(page.locator('path.cf-exclusion')).toHaveCount(1);

	// The server holds the old exclusion and the new one; the map document has one ring more.
	const after = (await (await analyst.get(`/api/v1/networks/${networkId}/area`)).json()).area;
	expect(after.exclusions.map((f: { properties: { name: string } }) => f.properties.name)).toEqual([exclusions.features[0].properties.name, 'test pit']);
	const ring = after.exclusions[1].geometry.coordinates[0][0] as [number, number][];
	expect(ring).toHaveLength(4);
	expect(ring[0]).toEqual(ring[3]);
	// The corners were stored where they were clicked (the web map is EPSG:3857; a click becomes
	// working-CRS metres, then lon/lat): the stored vertex is the read-out's lon/lat, the read-out's
	// working-CRS metres give that lon/lat through an independent UTM definition, and the ground
	// distance between the two corners is their distance on screen at the scale bar's metres per pixel.
	const near = (p: { lon: number; lat: number }) => ring.slice(0, 3).reduce((best, v) => (Math.hypot(v[0] - p.lon, v[1] - p.lat) < Math.hypot(best[0] - p.lon, best[1] - p.lat) ? v : best));
	const utm = proj4(`+proj=utm +zone=${docBefore.crs.epsg % 100}${docBefore.crs.epsg > 32700 ? ' +south' : ''} +datum=WGS84 +units=m +no_defs`, 'EPSG:4326');
	for (const p of [first, second]) {
		const v = near(p);
		expect(Math.abs(v[0] - p.lon)).toBeLessThanOrEqual(0.6e-5);
		expect(Math.abs(v[1] - p.lat)).toBeLessThanOrEqual(0.6e-5);
		const [lon, lat] = utm.forward([p.x, p.y]);
		expect(geodesicM(v, [lon, lat])).toBeLessThan(1.5);
	}
	const groundM = geodesicM(near(first), near(second));
	expect(Math.abs(groundM / (Math.hypot(130, 10) * (scaleMetres / scalePx)) - 1)).toBeLessThan(0.03);
	const docAfter = (await (await analyst.get(`/api/v1/networks/${networkId}/map`)).json()).map;
	expect(docAfter.exclusions).toHaveLength(ringsBefore + 1);
	await page.screenshot({ path: '/tmp/map-app-drawn.png' });
});

test('while its importance image is being drawn, the Map tab shows the rest at once, follows the job and then shows the image, without a reload', async ({ page }) => {
	test.setTimeout(180_000); // an upload, a recipe version and the image: three jobs
	const url = process.env.DATABASE_URL;
	if (!url) throw new Error('DATABASE_URL is not set: run through npm test');
	const admin = await contextFor('admin');
	const created = await admin.post('/api/v1/networks', { data: { name: `Map pending ${randomBytes(3).toString('hex')}` } });
	const networkId = (await created.json()).network.id as number;
	const analyst = await contextFor('analyst');
	const layerId = (await uploadLayerViaApi(analyst, networkId, { name: 'Soil moisture', kind: 'soil_moisture', fileName: 'soil-moisture.tif' }, readFileSync(demo('soil-moisture.tif')))).id;
	const versionId = (await saveRecipeViaApi(analyst, networkId, { name: 'Wetness', definition: { layers: [{ layerId: String(layerId), transform: 'minmax', weight: 1 }] } })).id;
	expect((await analyst.post(`/api/v1/networks/${networkId}/recipes/current`, { data: { versionId } })).ok()).toBe(true);

	// The version's own job queued its images (working CRS and EPSG:3857). A second version with the
	// same surface is written straight into the database, so no job has drawn or queued its images;
	// the network uses it, and the job of its 3857 image (what the Map tab, a web map, asks for) is
	// queued here to start only when the test says so: the page meets it queued, finding it by its key.
	const db = createDb(url, 1);
	try {
		const sensorCount = await insertDemoMapRows(db, networkId);
		const { id: _id, version: _v, ...copy } = await db('importance_recipe_versions').where({ id: versionId }).first();
		const [copyId] = await db('importance_recipe_versions').insert({ ...copy, version: 2 });
		await db('importance_recipes').where({ id: copy.recipe_id }).update({ latest_version: 2 });
		expect((await analyst.post(`/api/v1/networks/${networkId}/recipes/current`, { data: { versionId: copyId } })).ok()).toBe(true);
		const job = await enqueueJob(db, { kind: 'map-importance', payload: { networkId, versionId: copyId, epsg: 3857 }, networkId, idempotencyKey: `map-importance:${copyId}:3857`, delayMs: 10 * 60_000 });

		const t = demoUser('technician');
		await signInPage(page, t.email, t.password);
		await gotoHydrated(page, `/networks/${networkId}/map`);
		await expect(page.getByTestId('network-map')).toHaveClass(/leaflet-container/);
		await expect(page.locator('.cf-sensor')).toHaveCount(sensorCount);
		await expect(page.getByTestId('importance-pending')).toContainText('Importance map being prepared');
		await expect(page.getByTestId('job-state')).toHaveText('queued');
		await expect(page.locator('img.cf-backdrop')).toHaveCount(0);
		await page.evaluate(() => ((window as unknown as { stillHere: boolean }).stillHere = true));

		await db('jobs').where({ id: job.id }).update({ run_after: db.fn.now() });
		await expect(page.locator('img.cf-backdrop')).toHaveCount(1, { timeout: 60_000 });
		await expect.poll(() => page.locator('img.cf-backdrop').evaluate((img: HTMLImageElement) => img.complete && img.naturalWidth > 0)).toBe(true);
		await expect(page.getByTestId('importance-pending')).toHaveCount(0);
		expect(await page.evaluate(() => (window as unknown as { stillHere?: boolean }).stillHere)).toBe(true);
		expect((await db('jobs').where({ id: job.id }).first()).state).toBe('finished');
	} finally {
		await db.destroy();
	}
});

test('the demo network opens on a living map: importance, the four sub-catchments, the water storage and the 14 sensors', async ({ page }) => {
	const t = demoUser('technician');
	const tech = await contextFor('technician');
	const { networks } = (await (await tech.get('/api/v1/networks')).json()) as { networks: { id: number; slug: string }[] };
	const networkId = networks.find((n) => n.slug === 'vennarrow-vale')!.id;
	// Another spec may have put a new recipe version in use on the demo network a moment ago: its map
	// images are then still being drawn by their jobs (the document says so in importanceJob).
	const mapDoc = async () => (await (await tech.get(`/api/v1/networks/${networkId}/map`)).json()).map;
	await expect.poll(async () => (await mapDoc()).backdrop?.kind ?? null, { timeout: 60_000 }).toBe('importance');
	const doc = await mapDoc();
	await tech.dispose();
	// data/demo/README.md: 14 sensors, four sub-catchments, one exclusion; the seed puts a recipe in use.
	expect(doc.crs.epsg).toBe(32754);
	expect(doc.backdrop.kind).toBe('importance');
	expect(doc.sensors).toHaveLength(14);
	expect(doc.zones).toHaveLength(4);
	for (const z of doc.zones) expect(z.importanceShare).toBeGreaterThan(0);

	await page.setViewportSize({ width: 1400, height: 900 });
	await signInPage(page, t.email, t.password);
	await gotoHydrated(page, `/networks/${networkId}/map`);
	await expect(page.getByTestId('network-map')).toHaveClass(/leaflet-container/);
	await expect(page.locator('.cf-sensor')).toHaveCount(14);
	await expect(page.locator('path.cf-zone')).toHaveCount(4);
	await expect(page.locator('path.cf-exclusion')).toHaveCount(1);
	await expect.poll(() => page.locator('img.cf-backdrop').evaluate((img: HTMLImageElement) => img.complete && img.naturalWidth > 0)).toBe(true);
	await page.screenshot({ path: '/tmp/map-demo-network.png' });
});
