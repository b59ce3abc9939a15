/**
 * Area & zones tab end to end: the analyst uploads the demo study area, exclusions and zones,
 * lays a 3 km grid and sees each zone's share and sensor count. Works on a network of its own.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { expect, test, type APIRequestContext } from '@playwright/test';
import { contextFor, demoDir, freshNetwork, demoUser, saveRecipeViaApi, signInPage, uploadLayerViaApi, gotoHydrated, waitForHydration } from './support';



let networkId: number;

test.beforeAll(async () => {
	const admin = await contextFor('admin');
	networkId = await freshNetwork(admin, 'Zones e2e');
	await admin.dispose();
});

test('the analyst uploads the study area, exclusions and zones, lays a 3 km grid and sees shares and counts', async ({ page }) => {
	const u = demoUser('analyst');
	await signInPage(page, u.email, u.password);
	// Sensors first, so the zones have something to count.
	await gotoHydrated(page, `/networks/${networkId}/sensors`);
	await page.locator('input[name="file"]').setInputFiles(path.join(demoDir, 'sensors.csv'));
	await page.getByRole('button', { name: 'Import', exact: true }).click();
	await expect(page.getByText('Imported 14 sensors from sensors.csv.')).toBeVisible();

	await gotoHydrated(page, `/networks/${networkId}/zones`);
	await expect(page.getByTestId('study-area-state')).toHaveText('Not outlined yet');
	await page.getByLabel('Study area file (GeoJSON or KML, WGS 84)').setInputFiles(path.join(demoDir, 'study-area.geojson'));
	await page.getByRole('button', { name: 'Upload study area' }).click();
	await expect(page.getByText('Study area taken from study-area.geojson.')).toBeVisible();
	await expect(page.getByTestId('study-area-state')).toHaveText('Outlined (1 polygon)');
	await expect(page.getByText('EPSG:32754')).toBeVisible();

	await page.getByLabel(/Exclusions file/).setInputFiles(path.join(demoDir, 'exclusions.geojson'));
	await page.getByRole('button', { name: 'Upload exclusions' }).click();
	await expect(page.getByTestId('exclusions-state')).toHaveText('Vennarrow Water (reservoir)');

	// A file that is not a polygon is refused with the parser's words.
	await page.getByLabel(/File \(GeoJSON or KML; property id or name\)/).setInputFiles({ name: 'points.geojson', mimeType: 'application/geo+json', buffer: Buffer.from('{"type":"Point","coordinates":[10,52]}') });
	await page.getByRole('button', { name: 'Upload zones' }).click();
	await expect(page.getByText(/expected a Feature, FeatureCollection, Polygon or MultiPolygon/)).toBeVisible();

	await page.getByLabel(/File \(GeoJSON or KML; property id or name\)/).setInputFiles(path.join(demoDir, 'zones.geojson'));
	await page.getByRole('button', { name: 'Upload zones' }).click();
	await expect(page.getByText('Zones taken from zones.geojson.')).toBeVisible();
	const uploaded = page.getByTestId('zone-set').filter({ hasText: 'uploaded polygons' });
	await expect(uploaded.getByTestId('zone-table').locator('tbody tr')).toHaveCount(4);
	await expect(uploaded).toContainText('North Fell Beck');
	// 14 sensors stand in the field in data/demo/sensors.csv (13 active, one probe faulty); the four sub-catchments partition the catchment.
	await expect(uploaded.getByTestId('zone-table').locator('tfoot')).toContainText('14');
	await expect(uploaded.getByTestId('zone-table').locator('tfoot')).toContainText('measured once an importance recipe is chosen');

	await page.getByLabel('3 km').check();
	await expect(page.getByLabel('Cell size (km)')).toHaveValue('3');
	await page.getByRole('button', { name: 'Lay the grid' }).click();
	await expect(page.getByText('A 3 km grid was laid over the study area.')).toBeVisible();
	const grid = page.getByTestId('zone-set').filter({ hasText: 'regular grid' });
	await expect(grid).toBeVisible();
	const gridRows = grid.getByTestId('zone-table').locator('tbody tr');
	expect(await gridRows.count()).toBeGreaterThan(20);
	await expect(grid.getByTestId('zone-table').locator('tfoot')).toContainText('14');

	await grid.getByRole('button', { name: 'Use this zone set' }).click();
	await expect(page.getByText('The network now uses this zone set.')).toBeVisible();
	await expect(page.getByTestId('zone-set').filter({ hasText: 'regular grid' }).getByText('in use')).toBeVisible();
	await page.screenshot({ path: '/tmp/inventory-zones.png', fullPage: true });

	// With an importance recipe (the demo soil moisture, inverted: drier = more important), the shares are measured.
	const analyst: APIRequestContext = await contextFor('analyst');
	const layer = await uploadLayerViaApi(analyst, networkId, { name: 'soil', kind: 'soil_moisture', fileName: 'soil-moisture.tif' }, readFileSync(path.join(demoDir, 'soil-moisture.tif')));
	const rec = await saveRecipeViaApi(analyst, networkId, { name: 'Dry', definition: { layers: [{ layerId: String(layer.id), transform: 'invert', weight: 1 }] } });
	const cur = await analyst.post(`/api/v1/networks/${networkId}/recipes/current`, { data: { versionId: rec.id }, headers: { accept: 'application/json' } });
	expect(cur.status(), await cur.text()).toBe(200);
	await page.reload();
	await waitForHydration(page);
	const uploadedSet = page.getByTestId('zone-set').filter({ hasText: 'uploaded polygons' });
	await expect(uploadedSet.getByText('Shares not measured with the current importance recipe')).toBeVisible();
	await uploadedSet.getByRole('button', { name: 'Measure shares' }).click();
	await expect(page.getByText('Shares measured with the current importance.')).toBeVisible();
	const foot = page.getByTestId('zone-set').filter({ hasText: 'uploaded polygons' }).getByTestId('zone-table').locator('tfoot');
	await expect(foot).toContainText(/(99\.[5-9]|100\.0) %/);
	await expect(page.getByTestId('zone-set').filter({ hasText: 'uploaded polygons' }).getByTestId('zone-table').locator('tbody tr').first()).toContainText('%');
	await page.screenshot({ path: '/tmp/inventory-zones-shares.png', fullPage: true });

	// The same through the JSON API.
	const sets = await (await analyst.get(`/api/v1/networks/${networkId}/zone-sets`, { headers: { accept: 'application/json' } })).json();
	const inUse = sets.zoneSets.find((s: { inUse: boolean }) => s.inUse);
	expect(inUse.kind).toBe('grid');
	// Sensors standing in the field: the 13 active and the 1 faulty of the demo inventory (retired ones never count).
	expect(inUse.zones.reduce((n: number, z: { sensorCount: number }) => n + z.sensorCount, 0)).toBe(14);
	await analyst.dispose();
});

test('a technician cannot open the area & zones tab or change zones', async () => {
	const tech = await contextFor('technician');
	expect((await tech.get(`/networks/${networkId}/zones`, { headers: { accept: 'text/html' } })).status()).toBe(403);
	expect((await tech.post(`/networks/${networkId}/zones?/gridZones`, { form: { cellSizeKm: '3' }, headers: { accept: 'text/html' } })).status()).toBe(403);
	expect((await tech.post(`/api/v1/networks/${networkId}/area`, { data: { version: 1, exclusions: [] }, headers: { accept: 'application/json' } })).status()).toBe(403);
	await tech.dispose();
});
