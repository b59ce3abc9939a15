/**
 * What every signed-in page owes a new user, checked for each demo role on the demo network:
 *  - exactly one h1, so that the page says what it is (WCAG 2.2 technique G141 and the HTML
 *    standard's outline advice; one h1 per page is common practice, no single source);
 *  - at 360 px wide (a common small phone viewport, common practice, no source) nothing runs off
 *    the side: the document is no wider than the viewport, so the page never scrolls sideways
 *    (WCAG 2.2 SC 1.4.10 Reflow asks for 320 CSS px);
 *  - the header's links and buttons are at least 44 px tall (WCAG 2.2 SC 2.5.5 Target Size,
 *    enhanced: 44 × 44 CSS px).
 * Each role walks the pages its own navigation offers: the header's links, the network's tabs,
 * and for roles that see proposals one proposal, one of its revisions and the comparison.
 */
import { expect, test, type Page } from '@playwright/test';
import { DEMO_NETWORK } from '../../seeds/demo';
import { contextFor, signInPage, demoUser, type DemoRole } from './support';

const ROLES: DemoRole[] = ['admin', 'analyst', 'reviewer', 'technician'];
const PHONE = { width: 360, height: 740 };

async function demoNetworkId(): Promise<number> {
	const admin = await contextFor('admin');
	const res = await admin.get('/api/v1/networks', { headers: { accept: 'application/json' } });
	expect(res.status()).toBe(200);
	const { networks } = (await res.json()) as { networks: { id: number; slug: string }[] };
	await admin.dispose();
	const demo = networks.find((n) => n.slug === DEMO_NETWORK.slug);
	if (!demo) throw new Error('the demo network is missing: npm test seeds it');
	return demo.id;
}

const hrefs = (page: Page, selector: string) => page.locator(selector).evaluateAll((as) => as.map((a) => a.getAttribute('href') ?? ''));

/** The pages a role reaches from its own navigation, in the order it meets them. */
async function pagesOf(page: Page, networkId: number): Promise<string[]> {
	const pages = new Set<string>();
	for (const h of await hrefs(page, 'header nav[aria-label="Main"] a')) pages.add(h);
	const base = `/networks/${networkId}`;
	await page.goto(base);
	const tabs = await hrefs(page, '[role="tablist"] a');
	expect(tabs.length).toBeGreaterThan(0);
	for (const t of tabs) pages.add(t);
	if (tabs.includes(`${base}/proposals`)) {
		await page.goto(`${base}/proposals`);
		const proposal = (await hrefs(page, '[data-testid="proposal-list"] a'))[0];
		expect(proposal, 'the demo has proposals').toBeTruthy();
		pages.add(proposal);
		await page.goto(proposal);
		const inner = await hrefs(page, 'main a');
		const revision = inner.find((h) => /\/revisions\/\d+$/.test(h));
		const compare = inner.find((h) => /\/compare(\?|$)/.test(h));
		if (revision) pages.add(revision);
		if (compare) pages.add(compare);
	}
	if (tabs.includes(`${base}/field`)) pages.add(`${base}/field/print`);
	return [...pages];
}

for (const role of ROLES) {
	test(`${role}: every page has one h1, and at 360 px nothing scrolls sideways and the header's targets are 44 px tall`, async ({ browser }) => {
		test.setTimeout(180_000);
		const networkId = await demoNetworkId();
		const ctx = await browser.newContext({ viewport: PHONE });
		const page = await ctx.newPage();
		const u = demoUser(role);
		await signInPage(page, u.email, u.password);
		const pages = await pagesOf(page, networkId);
		expect(pages.length).toBeGreaterThan(3);
		for (const url of pages) {
			await page.goto(url);
			await page.waitForLoadState('networkidle');
			await expect(page.locator('h1'), `${url}: one h1`).toHaveCount(1);
			const width = await page.evaluate(() => document.documentElement.scrollWidth);
			expect(width, `${url}: document ${width} px wide at 360`).toBeLessThanOrEqual(PHONE.width);
		}
		const small = await page.locator('header a, header button').evaluateAll((els) =>
			els.filter((el) => el.getBoundingClientRect().height > 0 && el.getBoundingClientRect().height < 44).map((el) => `${el.textContent?.trim()}: ${el.getBoundingClientRect().height} px`)
		);
		expect(small, 'header targets under 44 px').toEqual([]);
		await ctx.close();
	});
}
