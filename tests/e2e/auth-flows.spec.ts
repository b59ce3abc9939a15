import { expect, test } from '@playwright/test';
import { demoUser, linkIn, signInPage, waitForMail, gotoHydrated, waitForHydration } from './support';

test.describe('signing in and out', () => {
	test('an analyst signs in with e-mail and password, sees the networks, and signs out', async ({ page }) => {
		const u = demoUser('analyst');
		await signInPage(page, u.email, u.password);
		await expect(page.getByRole('heading', { name: 'Networks' })).toBeVisible();
		await expect(page.getByRole('link', { name: 'Vennarrow Vale soil moisture' })).toBeVisible();
		await expect(page.getByRole('link', { name: 'Users' })).toHaveCount(0);
		await page.getByRole('button', { name: 'Sign out' }).click();
		await expect(page).toHaveURL(/\/signin/);
		await gotoHydrated(page, '/networks');
		await expect(page).toHaveURL(/\/signin\?redirectTo=%2Fnetworks/);
	});

	test('a wrong password is refused with a clear message', async ({ page }) => {
		await gotoHydrated(page, '/signin');
		await page.getByLabel('E-mail').first().fill(demoUser('reviewer').email);
		await page.getByLabel('Password').fill('not the password');
		await page.getByRole('button', { name: 'Sign in', exact: true }).click();
		await expect(page.getByText('That e-mail and password do not match an account.')).toBeVisible();
	});

	test('sign-in returns to the page asked for', async ({ page }) => {
		await gotoHydrated(page, '/profile');
		await expect(page).toHaveURL(/redirectTo=%2Fprofile/);
		const u = demoUser('technician');
		await page.getByLabel('E-mail').first().fill(u.email);
		await page.getByLabel('Password').fill(u.password);
		await page.getByRole('button', { name: 'Sign in', exact: true }).click();
		await expect(page).toHaveURL(/\/profile$/);
		await expect(page.getByRole('heading', { name: 'Your profile' })).toBeVisible();
	});

	test('an e-mail sign-in link signs the reviewer in', async ({ page }) => {
		const u = demoUser('reviewer');
		const t0 = Date.now() - 1000;
		await gotoHydrated(page, '/signin');
		await page.locator('form[action="?/link"]').getByLabel('E-mail').fill(u.email);
		await page.getByRole('button', { name: 'Send me a link' }).click();
		await expect(page.getByText('a sign-in link is on its way')).toBeVisible();
		const mail = await waitForMail(u.email, /sign-in link/, t0);
		await gotoHydrated(page, linkIn(mail));
		await expect(page).toHaveURL(/\/networks/);
		await expect(page.getByText(u.name)).toBeVisible();
	});
});

test.describe.serial('invitation, role change and password reset', () => {
	const email = `new.technician.${Date.now()}@example.test`;
	const firstPassword = 'first-password-123';

	test('an admin invites a technician, who accepts and signs in', async ({ page, browser }) => {
		const admin = demoUser('admin');
		await signInPage(page, admin.email, admin.password);
		await page.getByRole('link', { name: 'Users' }).click();
		await page.getByLabel('E-mail').fill(email);
		await page.getByLabel('Role').first().selectOption('technician');
		const t0 = Date.now() - 1000;
		await page.getByRole('button', { name: 'Send invitation' }).click();
		await expect(page.getByText(`Invitation sent to ${email}`)).toBeVisible();
		const mail = await waitForMail(email, /invited/, t0);

		const ctx = await browser.newContext();
		const p2 = await ctx.newPage();
		await gotoHydrated(p2, linkIn(mail));
		await expect(p2.getByText('as field technician')).toBeVisible();
		await p2.getByLabel('Your name').fill('Wren Hollis');
		await p2.getByLabel(/Choose a password/).fill(firstPassword);
		await p2.getByRole('button', { name: 'Create my account' }).click();
		await expect(p2).toHaveURL(/\/signin/);
		await signInPage(p2, email, firstPassword);
		await expect(p2.getByText('Wren Hollis')).toBeVisible();
		await p2.goto('/admin/users');
		await expect(p2.getByRole('heading', { name: 'No access' })).toBeVisible();

		// A role change takes effect on the very next request, without signing in again.
		await page.reload();
		await waitForHydration(page);
		const row = page.getByRole('row', { name: /Wren Hollis/ });
		await row.getByRole('combobox').selectOption('admin');
		// Wait for the action's answer: the select shows the new value before the server has it.
		await Promise.all([page.waitForResponse((r) => /[?&]\/role$/.test(r.url()) && r.request().method() === 'POST'), row.getByRole('button', { name: 'Change' }).click()]);
		const res = await p2.goto('/admin/users');
		expect(res?.status()).toBe(200);
		await page.getByRole('row', { name: /Wren Hollis/ }).getByRole('combobox').selectOption('technician');
		await Promise.all([
			page.waitForResponse((r) => /[?&]\/role$/.test(r.url()) && r.request().method() === 'POST'),
			page.getByRole('row', { name: /Wren Hollis/ }).getByRole('button', { name: 'Change' }).click()
		]);
		expect((await p2.goto('/admin/users'))?.status()).toBe(403);
		await ctx.close();
	});

	test('the invited technician resets a forgotten password by e-mail', async ({ page }) => {
		const t0 = Date.now() - 1000;
		await gotoHydrated(page, '/signin');
		await page.getByRole('link', { name: 'Forgot your password?' }).click();
		await expect(page).toHaveURL(/\/reset$/);
		await page.getByLabel('E-mail').fill(email);
		await page.getByRole('button', { name: 'Send the link' }).click();
		await expect(page.getByText('we have sent a link')).toBeVisible();
		const mail = await waitForMail(email, /Reset your Cairnfield password/, t0);
		await gotoHydrated(page, linkIn(mail));
		await page.getByLabel(/New password/).fill('second-password-456');
		await page.getByLabel('The same again').fill('second-password-456');
		await page.getByRole('button', { name: 'Save the new password' }).click();
		await expect(page).toHaveURL(/\/signin/);
		await signInPage(page, email, 'second-password-456');
		// The link works once.
		await gotoHydrated(page, linkIn(mail));
		await expect(page.getByText('This reset link is no longer valid.')).toBeVisible();
	});
});
