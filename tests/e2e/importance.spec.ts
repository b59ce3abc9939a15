/**
 * The Importance tab: an analyst builds a two-layer recipe, previews it, saves v1, changes a
 * weight, saves v2 and sees both versions; a reviewer sees but cannot change; a technician is
 * refused. The spec uploads its own layers (through the API) under names with a random suffix.
 */
import { randomBytes } from 'node:crypto';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { expect, test } from '@playwright/test';
import { contextFor, demoUser, signInPage, uploadLayerViaApi, gotoHydrated } from './support';

const demo = (f: string) => path.resolve(import.meta.dirname, '../../data/demo', f);
const tag = randomBytes(3).toString('hex');
const soilName = `Moisture for recipes ${tag}`;
const vegName = `Greenness for recipes ${tag}`;
const recipeName = `Dry and green ${tag}`;

test.describe.configure({ mode: 'serial' });

test.describe('importance tab', () => {
	let networkId = 0;
	test.beforeAll(async () => {
		const ctx = await contextFor('analyst');
		const { networks } = (await (await ctx.get('/api/v1/networks?perPage=100', { headers: { accept: 'application/json' } })).json()) as { networks: { id: number; slug: string }[] };
		networkId = networks.find((n) => n.slug === 'vennarrow-vale')!.id;
		for (const [file, name, kind] of [
			['soil-moisture.tif', soilName, 'soil_moisture'],
			['vegetation-index.tif', vegName, 'vegetation_index']
		]) {
			await uploadLayerViaApi(ctx, networkId, { name, kind, fileName: file }, readFileSync(demo(file)));
		}
		await ctx.dispose();
	});

	test('an analyst previews a two-layer recipe, saves v1, changes a weight, saves v2 and uses it', async ({ page }) => {
		const u = demoUser('analyst');
		await signInPage(page, u.email, u.password);
		await gotoHydrated(page, `/networks/${networkId}/importance`);
		await expect(page.getByRole('heading', { name: 'Importance', exact: true })).toBeVisible();

		await page.getByLabel(`Use ${soilName}`).check();
		await page.getByLabel(`Transform of ${soilName}`).selectOption('invert');
		await page.getByLabel(`Weight of ${soilName}`).fill('2');
		await page.getByLabel(`Use ${vegName}`).check();
		await page.getByLabel(`Weight of ${vegName}`).fill('1');
		await page.getByRole('button', { name: 'Preview' }).click();
		const preview = page.getByRole('img', { name: 'Preview of the importance map' });
		await expect(preview).toBeVisible();
		await expect.poll(() => preview.evaluate((el) => (el as HTMLImageElement).naturalWidth)).toBeGreaterThan(0);
		// The finest layer sets the grid: the 30 m vegetation raster, 200 × 150 cells (data/demo/README.md).
		await expect(page.getByTestId('recipe-preview')).toContainText('200 × 150 cells of 30 m, EPSG:32754');
		await page.screenshot({ path: '/tmp/layers-app-importance.png', fullPage: true });

		await page.getByLabel('Recipe name').fill(recipeName);
		await page.getByLabel('Note for this version').fill('first try');
		await page.getByRole('button', { name: 'Save as version 1' }).click();
		await expect(page.getByRole('status')).toHaveText('Saved as version 1.', { timeout: 30_000 }); // a recipe-version job: seconds on a busy machine

		await page.getByLabel(`Weight of ${vegName}`).fill('3');
		await page.getByLabel('Note for this version').fill('more weight on vegetation');
		await page.getByRole('button', { name: 'Save as a new version' }).click();
		await expect(page.getByRole('status')).toHaveText('Saved as version 2.');

		const versions = page.getByRole('table', { name: `Versions of ${recipeName}` });
		await expect(versions.getByTestId('recipe-version')).toHaveCount(2);
		await expect(versions.getByTestId('recipe-version').nth(0)).toContainText(`${vegName}: scaled 0–1, weight 3`);
		await expect(versions.getByTestId('recipe-version').nth(1)).toContainText(`${vegName}: scaled 0–1, weight 1`);
		await expect(versions.getByTestId('recipe-version').nth(1)).toContainText('first try');

		await versions.getByTestId('recipe-version').nth(0).getByRole('button', { name: 'Use this version for the network' }).click();
		await expect(page.getByRole('status')).toHaveText('The network now uses version 2.');
		await expect(versions.getByTestId('recipe-version').nth(0)).toContainText('In use');
		await page.screenshot({ path: '/tmp/layers-app-importance-saved.png', fullPage: true });
	});

	test('a reviewer sees the versions but cannot change them; a technician is refused', async ({ page }) => {
		const r = demoUser('reviewer');
		await signInPage(page, r.email, r.password);
		await gotoHydrated(page, `/networks/${networkId}/importance`);
		await expect(page.getByRole('table', { name: `Versions of ${recipeName}` }).getByTestId('recipe-version')).toHaveCount(2);
		await expect(page.getByText('You can look at the recipes and their versions; analysts change them.')).toBeVisible();
		await expect(page.getByRole('button', { name: 'Preview' })).toHaveCount(0);
		await expect(page.getByRole('button', { name: 'Use this version for the network' })).toHaveCount(0);

		const reviewer = await contextFor('reviewer');
		const save = await reviewer.post(`/api/v1/networks/${networkId}/recipes`, { data: { name: `Reviewer ${tag}`, definition: { layers: [] } }, headers: { accept: 'application/json' } });
		expect(save.status()).toBe(403);
		await reviewer.dispose();

		const tech = await contextFor('technician');
		expect((await tech.get(`/networks/${networkId}/importance`, { headers: { accept: 'text/html' } })).status()).toBe(403);
		expect((await tech.get(`/api/v1/networks/${networkId}/recipes`, { headers: { accept: 'application/json' } })).status()).toBe(403);
		await tech.dispose();
	});
});
