/**
 * Sensors tab end to end: the analyst imports the demo inventory through the page, sorts, filters,
 * pages, edits and exports; a file with a bad row is refused whole with a per-row report; a
 * technician sees the sensors but cannot change them. Works on a network of its own.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { expect, test, type APIRequestContext } from '@playwright/test';
import { contextFor, demoDir, freshNetwork, demoUser, signInPage, gotoHydrated } from './support';



let networkId: number;

test.beforeAll(async () => {
	const admin = await contextFor('admin');
	networkId = await freshNetwork(admin, 'Sensors e2e');
	const area = JSON.parse(readFileSync(path.join(demoDir, 'study-area.geojson'), 'utf8'));
	const r = await admin.post(`/api/v1/networks/${networkId}/area`, { data: { version: 1, studyArea: area }, headers: { accept: 'application/json' } });
	expect(r.status(), await r.text()).toBe(200);
	await admin.dispose();
});

test('the analyst imports, sorts, filters, pages, edits and exports sensors', async ({ page }) => {
	const u = demoUser('analyst');
	await signInPage(page, u.email, u.password);
	await gotoHydrated(page, `/networks/${networkId}/sensors`);
	await expect(page.getByText('Get the landowner’s permission before entering private land.')).toBeVisible();
	await page.locator('input[name="file"]').setInputFiles(path.join(demoDir, 'sensors.csv'));
	await page.getByRole('button', { name: 'Import', exact: true }).click();
	await expect(page.getByText('Imported 14 sensors from sensors.csv.')).toBeVisible();
	await expect(page.getByTestId('sensor-total')).toHaveText('(14)');
	const rows = page.getByTestId('sensor-table').locator('tbody tr');
	await expect(rows).toHaveCount(14);
	await page.screenshot({ path: '/tmp/inventory-sensors.png', fullPage: true });

	// Sort by longitude, westernmost first (VV-P09 at 143.454455°E in data/demo/sensors.csv), then the other way.
	await page.getByRole('link', { name: 'Lon, lat (WGS 84)' }).click();
	await expect(page).toHaveURL(/sort=lon&dir=asc/);
	await expect(rows.first().locator('td').first()).toHaveText('VV-P09');
	await page.getByRole('link', { name: /Lon, lat \(WGS 84\)/ }).click();
	await expect(page).toHaveURL(/dir=desc/);
	await expect(rows.first().locator('td').first()).toHaveText('VV-P06');

	// Filter: the one faulty probe, then the neutron sensors.
	const filter = page.getByTestId('sensor-filter');
	await filter.getByLabel('Status').selectOption('faulty');
	await filter.getByRole('button', { name: 'Apply' }).click();
	await expect(rows).toHaveCount(1);
	await expect(rows.first()).toContainText('VV-P07');
	await filter.getByLabel('Status').selectOption('');
	await filter.getByLabel('Type').selectOption({ label: 'cosmic-ray neutron sensor' });
	await filter.getByRole('button', { name: 'Apply' }).click();
	await expect(rows).toHaveCount(2);

	// Pages of 10, sorted by id.
	await gotoHydrated(page, `/networks/${networkId}/sensors?perPage=10`);
	await expect(page.getByTestId('page-info')).toHaveText('Page 1 of 2');
	await expect(rows).toHaveCount(10);
	await page.getByRole('link', { name: 'Next →' }).click();
	await expect(page.getByTestId('page-info')).toHaveText('Page 2 of 2');
	await expect(rows).toHaveCount(4);

	// Edit one: it shows its x/y in the working CRS too.
	await rows.filter({ hasText: 'VV-P12' }).getByRole('link', { name: 'Edit' }).click();
	await expect(page.getByRole('heading', { name: 'Edit sensor VV-P12' })).toBeVisible();
	await page.locator('#sensor-form').getByLabel('Notes').fill('Moved 5 m after the hedge was cut');
	await page.locator('#sensor-form').getByLabel('Status').selectOption('faulty');
	await page.getByRole('button', { name: 'Save sensor' }).click();
	await expect(page.getByText('Sensor VV-P12 saved.')).toBeVisible();
	await expect(rows.filter({ hasText: 'VV-P12' })).toContainText('Moved 5 m after the hedge was cut');

	// A bad form entry names the field.
	await gotoHydrated(page, `/networks/${networkId}/sensors`);
	const form = page.locator('#sensor-form');
	await form.getByLabel('Id').fill('VV-X1');
	await form.getByLabel('Serial number').fill('S-1');
	await form.getByLabel('Longitude (° east, negative west)').fill('200');
	await form.getByLabel('Latitude (° north, negative south)').fill('-32.1');
	await page.getByRole('button', { name: 'Add sensor' }).click();
	await expect(form.getByText('Lon 200 is outside −180…180.')).toBeVisible();

	// Export CSV.
	const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('link', { name: 'Export CSV' }).click()]);
	const text = readFileSync((await download.path())!, 'utf8');
	const lines = text.trim().split('\r\n');
	expect(lines[0]).toBe('id,serial,type,lon,lat,install_date,status,notes');
	expect(lines).toHaveLength(15);
	expect(lines.find((l) => l.startsWith('VV-P12,'))).toContain('faulty,Moved 5 m after the hedge was cut');
});

test('a CSV with a bad row shows the per-row report and stores nothing', async ({ page }) => {
	const u = demoUser('analyst');
	await signInPage(page, u.email, u.password);
	await gotoHydrated(page, `/networks/${networkId}/sensors`);
	const before = (await page.getByTestId('sensor-total').textContent())!;
	const csv = 'id,serial,type,lon,lat,install_date,status\nBAD-1,S1,soil moisture probe,10.1,52.9,2025-01-01,active\nBAD-2,S2,rain gauge,10.1,52.9,2025-02-30,active\n';
	await page.locator('input[name="file"]').setInputFiles({ name: 'bad.csv', mimeType: 'text/csv', buffer: Buffer.from(csv) });
	await page.getByRole('button', { name: 'Import', exact: true }).click();
	const report = page.getByTestId('import-report');
	await expect(report).toBeVisible();
	await expect(report.locator('tbody tr')).toHaveCount(2);
	await expect(report).toContainText('unknown sensor type "rain gauge"');
	await expect(report.locator('tbody tr').first().locator('td').nth(0)).toHaveText('3');
	await expect(report).toContainText('install_date');
	await page.screenshot({ path: '/tmp/inventory-import-report.png', fullPage: true });
	await gotoHydrated(page, `/networks/${networkId}/sensors?q=BAD-`);
	await expect(page.getByTestId('sensor-total')).toHaveText('(0)');
	await gotoHydrated(page, `/networks/${networkId}/sensors`);
	await expect(page.getByTestId('sensor-total')).toHaveText(before);
});

test('a technician sees the sensors but cannot change them', async ({ page }) => {
	const u = demoUser('technician');
	await signInPage(page, u.email, u.password);
	await gotoHydrated(page, `/networks/${networkId}/sensors`);
	await expect(page.getByTestId('sensor-table')).toBeVisible();
	await expect(page.getByText('Before installing or moving a sensor in the field')).toBeVisible();
	await expect(page.getByRole('heading', { name: 'Import sensors' })).toHaveCount(0);
	await expect(page.getByRole('button', { name: 'Add sensor' })).toHaveCount(0);
	const tech: APIRequestContext = await contextFor('technician');
	for (const action of ['create', 'update', 'delete', 'import', 'createType']) {
		const res = await tech.post(`/networks/${networkId}/sensors?/${action}`, { form: { code: 'T-1', serial: 'x', lon: '10', lat: '52' }, headers: { accept: 'text/html' } });
		expect(res.status(), action).toBe(403);
	}
	const list = await tech.get(`/api/v1/networks/${networkId}/sensors`, { headers: { accept: 'application/json' } });
	expect(list.status()).toBe(200);
	const someone = (await list.json()).sensors[0];
	if (someone) {
		const del = await tech.delete(`/api/v1/networks/${networkId}/sensors/${someone.id}?version=${someone.version}`, { headers: { accept: 'application/json' } });
		expect(del.status()).toBe(403);
	}
	const delType = await tech.delete(`/api/v1/networks/${networkId}/sensor-types/999999`, { headers: { accept: 'application/json' } });
	expect(delType.status()).toBe(403);
	await tech.dispose();
});
