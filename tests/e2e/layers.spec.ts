/**
 * The Layers tab: an analyst uploads the demo GeoTIFFs through the page and sees both phases and
 * the preview; files that cannot be layers are refused with the reason; a reviewer only looks; a
 * technician is refused. Names carry a random suffix so the spec does not depend on other specs.
 */
import { randomBytes } from 'node:crypto';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { expect, test, type Page } from '@playwright/test';
import { encodeTiff } from '../../src/bench/support/tiff-writer';
import { contextFor, demoUser, signInPage, gotoHydrated, waitForHydration } from './support';

const demo = (f: string) => path.resolve(import.meta.dirname, '../../data/demo', f);
const tag = randomBytes(3).toString('hex');

async function demoNetworkId(): Promise<number> {
	const ctx = await contextFor('analyst');
	const res = await ctx.get('/api/v1/networks?perPage=100', { headers: { accept: 'application/json' } });
	const { networks } = (await res.json()) as { networks: { id: number; slug: string }[] };
	await ctx.dispose();
	return networks.find((n) => n.slug === 'vennarrow-vale')!.id;
}

async function upload(page: Page, file: string | { name: string; mimeType: string; buffer: Buffer }, name: string, kind: string) {
	await page.getByLabel('GeoTIFF file').setInputFiles(file);
	await page.getByLabel('Name', { exact: true }).fill(name);
	await page.getByLabel('Kind', { exact: true }).selectOption({ label: kind });
	await page.getByRole('button', { name: 'Upload', exact: true }).click();
}

test.describe('layers tab', () => {
	let networkId = 0;
	test.beforeAll(async () => {
		networkId = await demoNetworkId();
	});

	test('an analyst uploads the demo soil moisture and vegetation rasters and sees both phases and the previews', async ({ page }) => {
		test.setTimeout(180_000);
		const u = demoUser('analyst');
		await signInPage(page, u.email, u.password);
		await gotoHydrated(page, `/networks/${networkId}/layers`);
		await expect(page.getByRole('heading', { name: 'Layers', exact: true })).toBeVisible();

		for (const [file, name, kind] of [
			['soil-moisture.tif', `Soil moisture ${tag}`, 'Soil moisture'],
			['vegetation-index.tif', `Vegetation ${tag}`, 'Vegetation index']
		] as const) {
			await upload(page, demo(file), name, kind);
			// Processing runs on the job queue, whose pool threads yield the CPU to pages (lowest
			// priority): on a loaded machine it can take far longer than the default 5 s wait.
			await expect(page.getByRole('status').filter({ hasText: `“${name}” is ready.` })).toBeVisible({ timeout: 60_000 });
			await expect(page.getByTestId('upload-phase')).toHaveText('done');
			await expect(page.getByTestId('processing-phase')).toHaveText('done');
			const img = page.getByRole('img', { name: `Preview of ${name}` });
			await expect(img).toBeVisible();
			await expect.poll(() => img.evaluate((el) => (el as HTMLImageElement).naturalWidth)).toBeGreaterThan(0);
			await expect(page.getByRole('figure', { name: `Legend of ${name}` })).toBeVisible();
		}
		const details = page.getByTestId('layer-details');
		await expect(details).toContainText('200 × 150 cells');
		await expect(details).toContainText('EPSG:32754');
		await expect(details).toContainText('30 m');
		await page.screenshot({ path: '/tmp/layers-app-layers.png', fullPage: true });

		// Filter by kind: only vegetation layers remain.
		await page.getByLabel('Filter by kind').selectOption({ label: 'Vegetation index' });
		await expect(page.getByRole('cell', { name: `Vegetation ${tag}`, exact: true })).toBeVisible();
		await expect(page.getByRole('cell', { name: `Soil moisture ${tag}`, exact: true })).toHaveCount(0);
		await page.getByLabel('Filter by kind').selectOption({ label: 'All kinds' });
		await page.getByLabel('Filter by name').fill(tag);
		await expect(page.getByTestId('layer-row')).toHaveCount(2);
	});

	test('a file that is not a TIFF and a TIFF without georeferencing are refused with the reason, and nothing is listed', async ({ page }) => {
		const u = demoUser('analyst');
		await signInPage(page, u.email, u.password);
		await gotoHydrated(page, `/networks/${networkId}/layers`);
		await upload(page, { name: 'notes.txt', mimeType: 'text/plain', buffer: Buffer.from('site,lon,lat\nA,9.1,52.3\n') }, `Not a raster ${tag}`, 'Other');
		await expect(page.getByRole('alert')).toContainText('notes.txt: not a TIFF');
		await expect(page.getByTestId('processing-phase')).toHaveText('refused');

		const plain = Buffer.from(encodeTiff({ width: 4, height: 3, bands: [Array.from({ length: 12 }, (_, i) => i)], sampleFormat: 3, bitsPerSample: 32 }));
		await upload(page, { name: 'scan.tif', mimeType: 'image/tiff', buffer: plain }, `No georeferencing ${tag}`, 'Other');
		await expect(page.getByRole('alert')).toContainText('no georeferencing');
		await page.reload();
		await waitForHydration(page);
		await expect(page.getByRole('cell', { name: `Not a raster ${tag}`, exact: true })).toHaveCount(0);
		await expect(page.getByRole('cell', { name: `No georeferencing ${tag}`, exact: true })).toHaveCount(0);
	});

	test('a reviewer sees the layers but no upload form; a technician is refused', async ({ page }) => {
		const r = demoUser('reviewer');
		await signInPage(page, r.email, r.password);
		await gotoHydrated(page, `/networks/${networkId}/layers`);
		await expect(page.getByRole('heading', { name: 'Layers', exact: true })).toBeVisible();
		await expect(page.getByText('You can look at the layers; analysts upload and delete them.')).toBeVisible();
		await expect(page.getByLabel('GeoTIFF file')).toHaveCount(0);
		await expect(page.getByRole('button', { name: 'Delete layer' })).toHaveCount(0);

		const tech = await contextFor('technician');
		expect((await tech.get(`/networks/${networkId}/layers`, { headers: { accept: 'text/html' } })).status()).toBe(403);
		const up = await tech.post(`/api/v1/networks/${networkId}/layers?name=x&kind=other`, { data: readFileSync(demo('soil-moisture.tif')), headers: { 'content-type': 'application/octet-stream', accept: 'application/json' } });
		expect(up.status()).toBe(403);
		await tech.dispose();
	});
});
