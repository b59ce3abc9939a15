/**
 * Forms work before the page's scripts load and keep what was typed when they take over: a slow
 * connection must not cost anyone their input.
 */
import { expect, test } from '@playwright/test';
import { demoUser, waitForHydration } from './support';

test('what is typed before the scripts load survives hydration, and the sign-in goes through', async ({ page }) => {
	// Hold every script of the app back until the form is filled in (stylesheets pass: they would
	// hold the page itself back).
	let release!: () => void;
	const gate = new Promise<void>((r) => (release = r));
	await page.route(/\/_app\/immutable\/.*\.js$/, async (route) => {
		await gate;
		await route.continue();
	});
	const u = demoUser('analyst');
	await page.goto('/signin', { waitUntil: 'domcontentloaded' });
	await expect(page.locator('html[data-hydrated]')).toHaveCount(0);
	const email = page.locator('form[action="?/password"]').getByLabel('E-mail');
	await email.fill(u.email);
	await page.getByLabel('Password').fill(u.password);
	release();
	await waitForHydration(page);
	await expect(email).toHaveValue(u.email);
	await expect(page.getByLabel('Password')).toHaveValue(u.password);
	await page.getByRole('button', { name: 'Sign in', exact: true }).click();
	await expect(page).toHaveURL(/\/networks/);
});

test('signing in works with scripts turned off', async ({ browser, baseURL }) => {
	const ctx = await browser.newContext({ javaScriptEnabled: false, baseURL });
	const page = await ctx.newPage();
	const u = demoUser('reviewer');
	await page.goto('/signin');
	await page.locator('form[action="?/password"]').getByLabel('E-mail').fill(u.email);
	await page.getByLabel('Password').fill(u.password);
	await page.getByRole('button', { name: 'Sign in', exact: true }).click();
	await expect(page).toHaveURL(/\/networks/);
	await expect(page.getByRole('heading', { name: 'Networks' })).toBeVisible();
	await expect(page.locator('html[data-hydrated]')).toHaveCount(0);
	await ctx.close();
});
