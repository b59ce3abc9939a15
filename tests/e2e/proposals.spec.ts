/**
 * Proposals in the running app: the JSON API as named (proposals, runs as jobs run by the worker
 * beside the app, revisions, submit, reviews with four eyes and the one-winner race, the plan),
 * then the whole flow in Chromium: the analyst runs all three strategies, compares them, writes
 * why and submits one; the reviewer gets the e-mail and approves; the plan appears.
 *
 * Each test builds its own network in the demo organisation through the services (the demo files,
 * the app's database and object store), so it does not depend on the state of the demo network.
 */
import { randomBytes } from 'node:crypto';
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import { expect, test, type APIRequestContext } from '@playwright/test';
import type { Knex } from 'knex';
import { createDb } from '../../src/lib/server/db/knex';
import { createObjectStore } from '../../src/lib/server/storage/create-object-store';
import { DEMO_ORGANISATION } from '../../seeds/demo';
import { placementNetwork } from '../helpers/placement-network';
import { contextFor, demoUser, linkIn, signInPage, waitForMail } from './support';

let db: Knex;

async function demoNetworkWithInputs(label: string): Promise<number> {
	const org = await db('organisations').select('id').where({ slug: DEMO_ORGANISATION.slug }).first();
	const analyst = await db('users').select('id').where({ email: demoUser('analyst').email }).first();
	const { network } = await placementNetwork(db, createObjectStore(process.env), org.id, analyst.id, `${label} ${randomBytes(3).toString('hex')}`);
	return network.id;
}

async function waitForRun(ctx: APIRequestContext, networkId: number, runId: number, timeoutMs = 60_000) {
	const end = Date.now() + timeoutMs;
	for (;;) {
		const res = await ctx.get(`/api/v1/networks/${networkId}/runs/${runId}`);
		expect(res.status()).toBe(200);
		const run = await res.json();
		if (['finished', 'failed', 'cancelled'].includes(run.state)) return run;
		if (Date.now() > end) throw new Error(`run ${runId} still ${run.state}`);
		await new Promise((r) => setTimeout(r, 300));
	}
}

test.beforeAll(() => {
	const url = process.env.DATABASE_URL;
	if (!url) throw new Error('DATABASE_URL is not set: run through npm test');
	db = createDb(url, 2);
});
test.afterAll(async () => db?.destroy());

test('the JSON API: proposals, runs, revisions, submit, four eyes, one winner, the plan', async () => {
	test.setTimeout(120_000);
	const networkId = await demoNetworkWithInputs('API proposals');
	const [analyst, reviewer, admin, technician] = await Promise.all([contextFor('analyst'), contextFor('reviewer'), contextFor('admin'), contextFor('technician')]);
	const base = `/api/v1/networks/${networkId}`;

	expect((await analyst.get(`${base}/plan`)).status()).toBe(404);
	const created = await analyst.post(`${base}/proposals`, { data: { title: 'Two new probes for the west' } });
	expect(created.status()).toBe(201);
	const proposal = await created.json();
	expect(proposal).toMatchObject({ id: expect.any(Number), title: 'Two new probes for the west', state: 'empty' });
	expect((await (await reviewer.get(`${base}/proposals`)).json()).proposals.map((p: { id: number }) => p.id)).toContain(proposal.id);
	expect((await technician.get(`${base}/proposals`)).status()).toBe(403);
	expect((await reviewer.post(`${base}/proposals`, { data: { title: 'x' } })).status()).toBe(403);

	const bad = await analyst.post(`${base}/proposals/${proposal.id}/runs`, { data: { strategy: 'nearest' } });
	expect(bad.status()).toBe(400);
	expect((await bad.json()).error).toMatchObject({ code: 'invalid_input', fields: { strategy: expect.any(String) } });

	const queued = await analyst.post(`${base}/proposals/${proposal.id}/runs`, { data: { strategy: 'range-limited', addCount: 2, maxIterations: 60 } });
	expect(queued.status()).toBe(202);
	const run = await queued.json();
	expect(run).toMatchObject({ id: expect.any(Number), state: 'queued' });
	const done = await waitForRun(analyst, networkId, run.id);
	expect(done).toMatchObject({ state: 'finished', revisionId: expect.any(Number), progress: { iteration: expect.any(Number), cost: expect.any(Number) } });

	const revision = await (await reviewer.get(`${base}/revisions/${done.revisionId}`)).json();
	expect(revision).toMatchObject({ id: done.revisionId, proposalId: proposal.id, state: 'draft', strategy: 'range-limited', metrics: { cost: expect.any(Number), coverage: expect.any(Number) }, targets: { type: 'FeatureCollection' } });
	expect(Array.isArray(revision.moves)).toBe(true);
	expect(revision.history[0]).toMatchObject({ iteration: 0 });
	// Two sensors added: 13 taking part (data/demo/sensors.csv: 14, one faulty) + 2 = 15 sites, two of them installations.
	expect(revision.targets.features).toHaveLength(15);
	expect(revision.installations).toHaveLength(2);
	// The surface here is the soil moisture alone, whose pixels are 1 km (data/demo/README.md), coarser than 1/10 of the
	// smallest radius taking part (the neutron sensors' 150 m; the demo probes' is 1 km, seeds/demo-inventory.ts): the pixels decide, and the revision says so.
	expect(revision.inputs.cellSize).toMatchObject({ rule: 'pixel', chosenM: 1000, smallestRadiusM: 150, requestedM: null });

	// A draft cannot be decided; the analyst cannot review at all; the author submits.
	expect((await reviewer.post(`${base}/revisions/${revision.id}/reviews`, { data: { decision: 'approve', comment: '' } })).status()).toBe(409);
	expect((await analyst.post(`${base}/revisions/${revision.id}/reviews`, { data: { decision: 'approve', comment: '' } })).status()).toBe(403);
	const submitted = await analyst.post(`${base}/revisions/${revision.id}/submit`, { data: { note: 'Two probes where the west dries first.' } });
	expect(submitted.status()).toBe(200);
	expect((await submitted.json()).state).toBe('submitted');
	expect((await analyst.post(`${base}/revisions/${revision.id}/submit`)).status()).toBe(409);

	// Two reviewers at once: one 200, one 409.
	const [a, b] = await Promise.all([
		reviewer.post(`${base}/revisions/${revision.id}/reviews`, { data: { decision: 'approve', comment: 'Good spread.' } }),
		admin.post(`${base}/revisions/${revision.id}/reviews`, { data: { decision: 'reject', comment: 'Too far to carry.' } })
	]);
	expect([a.status(), b.status()].sort()).toEqual([200, 409]);
	const loser = a.status() === 409 ? a : b;
	expect((await loser.json()).error.code).toBe('not_submitted');
	const winner = await (a.status() === 200 ? a : b).json();

	const plan = await technician.get(`${base}/plan`);
	if (winner.state === 'approved') {
		expect(plan.status()).toBe(200);
		expect(await plan.json()).toMatchObject({ revisionId: revision.id, approvedAt: expect.any(String), state: 'current' });
	} else {
		expect(plan.status()).toBe(404);
	}

	// Cancelling: a long run is cancelled through DELETE.
	const long = await (await analyst.post(`${base}/proposals/${proposal.id}/runs`, { data: { strategy: 'lloyd', maxIterations: 5000, tolerance: 0 } })).json();
	const cancelled = await analyst.delete(`${base}/runs/${long.id}`);
	expect(cancelled.status()).toBe(200);
	expect((await waitForRun(analyst, networkId, long.id)).state).toBe('cancelled');
	for (const c of [analyst, reviewer, admin, technician]) await c.dispose();
});

test('in Chromium: run all three, compare, submit; the reviewer approves from the e-mail; the plan appears', async ({ page, browser }) => {
	test.setTimeout(180_000);
	const networkId = await demoNetworkWithInputs('Browser proposals');
	const shots = path.resolve(import.meta.dirname, '../../test-results/proposals');
	mkdirSync(shots, { recursive: true });
	await page.setViewportSize({ width: 1440, height: 1000 });

	await signInPage(page, demoUser('analyst').email, demoUser('analyst').password);
	await page.goto(`/networks/${networkId}/proposals`);
	await page.getByLabel('Title').fill('Spring redeployment');
	await page.getByRole('button', { name: 'Create the proposal' }).click();
	await expect(page.getByRole('heading', { name: 'Spring redeployment' })).toBeVisible();

	await page.getByLabel('Maximum iterations').fill('80');
	await page.getByRole('button', { name: /Compare all three/ }).click();
	// Progress follows the jobs; when they finish, the revisions appear.
	await expect(page.getByTestId('revision-list').locator('tbody tr')).toHaveCount(3, { timeout: 90_000 });
	for (const box of await page.getByTestId('revision-list').getByRole('checkbox').all()) await box.check();
	await page.getByRole('button', { name: 'Compare the chosen revisions' }).click();
	await expect(page).toHaveURL(/\/compare\?/);
	await expect(page.getByTestId('comparison-maps').locator('figure')).toHaveCount(4, { timeout: 30_000 });
	await expect(page.getByTestId('metrics-table')).toContainText('Cost H');
	await expect(page.getByTestId('cost-chart').locator('canvas')).toHaveCount(1);
	// Arrows and σ-shaded zones are drawn on the revision maps.
	await expect(page.locator('.cf-arrow').first()).toBeAttached();
	await expect(page.locator('.cf-zone-sigma').first()).toBeAttached();
	await page.screenshot({ path: path.join(shots, 'compare-desk.png'), fullPage: true });

	await page.getByLabel('Why this revision').fill('Zone-balanced: every sub-catchment gets probes in proportion, at a cost close to Lloyd’s.');
	await page.getByRole('button', { name: 'Save the reasons' }).click();
	await expect(page.getByText('Saved.')).toBeVisible();

	const phone = await browser.newPage({ viewport: { width: 360, height: 780 }, deviceScaleFactor: 2 });
	await signInPage(phone, demoUser('analyst').email, demoUser('analyst').password);
	await phone.goto(page.url());
	await expect(phone.getByTestId('comparison-maps').locator('figure')).toHaveCount(4, { timeout: 30_000 });
	await phone.screenshot({ path: path.join(shots, 'compare-360.png'), fullPage: true });
	// Nothing is wider than the phone's screen (wide tables scroll inside their own box).
	expect(await phone.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(360);
	await phone.close();

	// Revisions are numbered as their runs finish: find the zone-balanced one in the list.
	await page.goto(`/networks/${networkId}/proposals`);
	await page.getByRole('link', { name: 'Spring redeployment' }).click();
	const row = page.getByTestId('revision-list').locator('tbody tr').filter({ hasText: 'Zone-balanced' });
	const label = (await row.getByRole('link').textContent())!.trim();
	const n = Number(/\d+/.exec(label)![0]);
	await row.getByRole('link').click();
	await expect(page.getByRole('heading', { name: `Revision ${n}: Zone-balanced` })).toBeVisible();
	await expect(page.getByTestId('cell-size')).toContainText('by importance pixel');
	await expect(page.getByTestId('comparison-maps').locator('figure')).toHaveCount(2, { timeout: 30_000 });
	await page.screenshot({ path: path.join(shots, 'revision-desk.png'), fullPage: true });
	const sentAt = Date.now();
	await page.getByRole('button', { name: `Submit revision ${n}` }).click();
	await expect(page.getByTestId('revision-state')).toHaveText('Waiting for review');

	// The reviewer's e-mail links to the revision, from the configured origin.
	const mail = await waitForMail(demoUser('reviewer').email, new RegExp(`Review wanted: Spring redeployment, revision ${n}$`), sentAt - 1000);
	const link = linkIn(mail);
	expect(link.startsWith(process.env.BASE_URL ?? 'http://127.0.0.1')).toBe(true);
	const reviewerPage = await browser.newPage();
	await signInPage(reviewerPage, demoUser('reviewer').email, demoUser('reviewer').password);
	await reviewerPage.goto(link);
	await expect(reviewerPage.getByText('every sub-catchment gets probes')).toBeVisible();
	await reviewerPage.getByLabel(/Comment/).fill('Balanced and short carries. Approved.');
	await reviewerPage.getByRole('button', { name: 'Approve as the plan' }).click();
	await expect(reviewerPage.getByTestId('revision-state')).toHaveText('Approved: the plan');
	await reviewerPage.goto(`/networks/${networkId}/proposals`);
	await expect(reviewerPage.getByTestId('current-plan')).toContainText(`Spring redeployment, revision ${n}`);
	await reviewerPage.goto(`/networks/${networkId}/history`);
	await expect(reviewerPage.getByTestId('plan-history')).toContainText('Current plan');
	await expect(reviewerPage.getByTestId('history-events')).toContainText('Balanced and short carries');
	await reviewerPage.close();

	// The author hears of it.
	await waitForMail(demoUser('analyst').email, new RegExp(`Revision ${n} of Spring redeployment approved`), sentAt - 1000);
});
