/** Shared helpers of the end-to-end tests: demo accounts, signing in, reading caught e-mail. */
import path from 'node:path';
import { expect, request, type APIRequestContext, type Page } from '@playwright/test';
import { readMailbox, type CapturedMail } from '../../src/lib/server/mail/dev-inbox';
import { DEMO_USERS } from '../../seeds/demo';

export type DemoRole = (typeof DEMO_USERS)[number]['role'];
export const baseURL = process.env.BASE_URL ?? 'http://127.0.0.1:3000';
export const demoDir = path.resolve(import.meta.dirname, '../../data/demo');

export function demoUser(role: DemoRole) {
	return DEMO_USERS.find((u) => u.role === role)!;
}

/**
 * Waits until the page's scripts have hydrated it (the root layout sets data-hydrated on <html>).
 * Forms work and keep what was typed before that, but a test that types into a page still loading
 * its scripts tests the network's speed, not the page.
 */
export async function waitForHydration(page: Page): Promise<void> {
	await page.locator('html[data-hydrated]').waitFor({ state: 'attached' });
}

/** page.goto, then wait for hydration: use it before typing into the page. */
export async function gotoHydrated(page: Page, url: string): Promise<void> {
	await page.goto(url);
	await waitForHydration(page);
}

export async function signInPage(page: Page, email: string, password: string): Promise<void> {
	await gotoHydrated(page, '/signin');
	await page.getByLabel('E-mail').first().fill(email);
	await page.getByLabel('Password').fill(password);
	await page.getByRole('button', { name: 'Sign in', exact: true }).click();
	await expect(page).toHaveURL(/\/networks/);
}

/** An API context signed in as the role (or anonymous for null), sending the Origin SvelteKit checks. */
export async function contextFor(role: DemoRole | null): Promise<APIRequestContext> {
	const ctx = await request.newContext({ baseURL, extraHTTPHeaders: { origin: baseURL }, maxRedirects: 0 });
	if (role) {
		const u = demoUser(role);
		const res = await ctx.post('/signin?/password', {
			form: { providerId: 'password', email: u.email, password: u.password, redirectTo: '/networks' },
			headers: { accept: 'text/html' }
		});
		expect([302, 303]).toContain(res.status());
		const state = await ctx.storageState();
		expect(state.cookies.some((c) => c.name.includes('session-token'))).toBe(true);
	}
	return ctx;
}

/** Waits for an e-mail to `to` caught by the fake SMTP server (DEV_MAIL_DIR). */
export async function waitForMail(to: string, subject: RegExp, after = 0): Promise<CapturedMail> {
	const dir = process.env.DEV_MAIL_DIR;
	if (!dir) throw new Error('DEV_MAIL_DIR is not set: run through npm test');
	const end = Date.now() + 20_000;
	while (Date.now() < end) {
		const hit = readMailbox(dir).find((m) => m.to.includes(to) && subject.test(m.subject) && Date.parse(m.receivedAt) >= after);
		if (hit) return hit;
		await new Promise((r) => setTimeout(r, 200));
	}
	throw new Error(`no e-mail to ${to} matching ${subject}`);
}

export function linkIn(mail: CapturedMail): string {
	const m = /(https?:\/\/\S+)/.exec(mail.text);
	if (!m) throw new Error('no link in the e-mail');
	return m[1];
}

/** A fresh network (created by an admin through the API) with the two demo sensor types. */
export async function freshNetwork(admin: APIRequestContext, label: string): Promise<number> {
	const name = `${label} ${Date.now().toString(36)}${Math.floor(Math.random() * 1e6).toString(36)}`;
	const res = await admin.post('/api/v1/networks', { data: { name }, headers: { accept: 'application/json' } });
	expect(res.status(), await res.text()).toBe(201);
	const { network } = await res.json();
	for (const t of [
		{ name: 'soil moisture probe', radiusM: 30, mobility: 'relocatable', relocationMinutes: 45 },
		{ name: 'cosmic-ray neutron sensor', radiusM: 150, mobility: 'fixed' }
	]) {
		const r = await admin.post(`/api/v1/networks/${network.id}/sensor-types`, { data: t, headers: { accept: 'application/json' } });
		expect(r.status(), await r.text()).toBe(201);
	}
	return network.id;
}

/**
 * Uploads a GeoTIFF through the API (202 with the processing job), follows the job until it ends
 * and returns the ready layer. The query holds name, kind and the other metadata.
 */
export async function uploadLayerViaApi(ctx: APIRequestContext, networkId: number, query: Record<string, string>, data: Buffer): Promise<{ id: number; name: string; status: string }> {
	const up = await ctx.post(`/api/v1/networks/${networkId}/layers?${new URLSearchParams(query)}`, { data, headers: { 'content-type': 'application/octet-stream', accept: 'application/json' } });
	expect(up.status(), await up.text()).toBe(202);
	const { layer, job } = (await up.json()) as { layer: { id: number }; job: { id: number } };
	await expect
		.poll(async () => ((await (await ctx.get(`/api/v1/networks/${networkId}/jobs/${job.id}`, { headers: { accept: 'application/json' } })).json()) as { job: { state: string } }).job.state, { timeout: 60_000, intervals: [200, 500] })
		.toBe('finished');
	const res = await ctx.get(`/api/v1/networks/${networkId}/layers/${layer.id}`, { headers: { accept: 'application/json' } });
	expect(res.status()).toBe(200);
	const ready = (await res.json()).layer;
	expect(ready.status).toBe('ready');
	return ready;
}

/** Follows a job through the API until it ends; returns it (its state says how it ended). */
export async function jobOutcome(ctx: APIRequestContext, networkId: number, jobId: number): Promise<{ state: string; result: unknown; error: string | null }> {
	let job: { state: string; result: unknown; error: string | null } = { state: 'queued', result: null, error: null };
	await expect
		.poll(async () => {
			job = ((await (await ctx.get(`/api/v1/networks/${networkId}/jobs/${jobId}`, { headers: { accept: 'application/json' } })).json()) as { job: typeof job }).job;
			return ['finished', 'failed', 'cancelled'].includes(job.state);
		}, { timeout: 60_000, intervals: [200, 500] })
		.toBe(true);
	return job;
}

/** Saves a recipe version through the API (202 with the job that computes its surface) and returns the version. */
export async function saveRecipeViaApi(ctx: APIRequestContext, networkId: number, body: { name: string; definition: unknown }): Promise<{ id: number; version: number }> {
	const res = await ctx.post(`/api/v1/networks/${networkId}/recipes`, { data: body, headers: { accept: 'application/json' } });
	expect(res.status(), await res.text()).toBe(202);
	const done = await jobOutcome(ctx, networkId, ((await res.json()) as { job: { id: number } }).job.id);
	expect(done.state, done.error ?? '').toBe('finished');
	return (done.result as { version: { id: number; version: number } }).version;
}
