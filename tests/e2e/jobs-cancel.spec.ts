/**
 * Cancel buttons on the pages that follow a job. The job each page follows is a real queued job
 * that no worker starts yet (inserted into the test database with a start time a day ahead), so the
 * page is caught while the job waits: the request that would queue it is answered with that job.
 * The Cancel button must end it through DELETE /api/v1/networks/:id/jobs/:jobId.
 */
import { randomBytes } from 'node:crypto';
import { expect, test, type Page } from '@playwright/test';
import { createDb } from '../../src/lib/server/db/knex';
import { contextFor, demoUser, gotoHydrated, signInPage } from './support';

const tag = randomBytes(3).toString('hex');

async function demoNetworkId(): Promise<number> {
	const ctx = await contextFor('analyst');
	const { networks } = (await (await ctx.get('/api/v1/networks?perPage=100', { headers: { accept: 'application/json' } })).json()) as { networks: { id: number; slug: string }[] };
	await ctx.dispose();
	return networks.find((n) => n.slug === 'vennarrow-vale')!.id;
}

/** A queued job of `kind` that no worker claims for a day, and a way to read its state. */
async function heldJob(networkId: number, kind: string, payload: Record<string, unknown>) {
	const url = process.env.DATABASE_URL;
	if (!url) throw new Error('DATABASE_URL is not set: run through npm test');
	const db = createDb(url, 1);
	try {
		const [id] = await db('jobs').insert({ kind, network_id: networkId, payload: JSON.stringify(payload), idempotency_key: `cancel-check:${kind}:${tag}`, run_after: db.raw('CURRENT_TIMESTAMP(3) + INTERVAL 1 DAY') });
		return Number(id);
	} finally {
		await db.destroy();
	}
}

async function jobState(page: Page, networkId: number, jobId: number): Promise<string> {
	const res = await page.request.get(`/api/v1/networks/${networkId}/jobs/${jobId}`);
	return ((await res.json()) as { job: { state: string } }).job.state;
}

test.describe('cancelling a followed job', () => {
	let networkId = 0;
	test.beforeAll(async () => {
		networkId = await demoNetworkId();
	});

	test('the importance page cancels its preview job', async ({ page }) => {
		const jobId = await heldJob(networkId, 'recipe-preview', { networkId, definition: { layers: [] } });
		const u = demoUser('analyst');
		await signInPage(page, u.email, u.password);
		await page.route(`**/api/v1/networks/${networkId}/recipes/preview`, async (route) => {
			const job = (await (await page.request.get(`/api/v1/networks/${networkId}/jobs/${jobId}`)).json()).job;
			await route.fulfill({ status: 202, contentType: 'application/json', body: JSON.stringify({ job }) });
		});
		await gotoHydrated(page, `/networks/${networkId}/importance`);
		await page.getByRole('checkbox', { name: /^Use / }).first().check();
		await page.getByRole('button', { name: 'Preview' }).click();
		await expect(page.getByTestId('preview-progress')).toContainText('queued…');
		await page.getByTestId('job-cancel').click();
		await expect(page.getByRole('alert').filter({ hasText: 'Cancelled before it started.' })).toBeVisible();
		await expect(page.getByTestId('preview-progress')).toHaveCount(0);
		expect(await jobState(page, networkId, jobId)).toBe('cancelled');
	});

	test('the upload form cancels the processing job it follows', async ({ page }) => {
		// Layer 0 does not exist: the cancelled job's failed hook (mark the layer failed) finds nothing.
		const jobId = await heldJob(networkId, 'layer-processing', { networkId, organisationId: 0, actorId: 0, layerId: 0 });
		const u = demoUser('analyst');
		await signInPage(page, u.email, u.password);
		await page.route(`**/api/v1/networks/${networkId}/layers?*`, async (route) => {
			if (route.request().method() !== 'POST') return route.fallback();
			const job = (await (await page.request.get(`/api/v1/networks/${networkId}/jobs/${jobId}`)).json()).job;
			await route.fulfill({ status: 202, contentType: 'application/json', body: JSON.stringify({ layer: { id: 0, name: `Held ${tag}`, status: 'processing' }, job }) });
		});
		await gotoHydrated(page, `/networks/${networkId}/layers`);
		await page.getByLabel('GeoTIFF file').setInputFiles({ name: 'held.tif', mimeType: 'image/tiff', buffer: Buffer.from([0x49, 0x49, 0x2a, 0x00]) });
		await page.getByLabel('Name', { exact: true }).fill(`Held ${tag}`);
		await page.getByLabel('Kind', { exact: true }).selectOption({ label: 'Other' });
		await page.getByRole('button', { name: 'Upload', exact: true }).click();
		await expect(page.getByTestId('job-state')).toHaveText('queued');
		await page.getByTestId('job-cancel').click();
		await expect(page.getByText('Cancelled before it started.')).toBeVisible();
		await expect(page.getByTestId('processing-phase')).toHaveText('refused');
		expect(await jobState(page, networkId, jobId)).toBe('cancelled');
	});
});
