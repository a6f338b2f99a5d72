// The Content-Security-Policy in a real browser: signing in, the setups and admin pages, and the
// planner with its Web Worker simulation run without a single policy violation (hydration scripts,
// styles, fonts, the worker and its imports all allowed), and a framing attempt is refused.
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, expect, it } from 'vitest';
import { PASSWORD, people, seedDataDir, startServer, type RunningServer } from '../integration/support/server';
import { launchChromium } from './chromium';

let server: RunningServer;
let browser: Browser;

beforeAll(async () => {
	server = await startServer((await seedDataDir()).dataDir);
	browser = await launchChromium();
});
afterAll(async () => {
	await browser?.close();
	await server?.stop();
});

/** Every violation the page reports (the event fires for blocked scripts, styles, workers and frames). */
async function watchViolations(page: Page) {
	const seen: string[] = [];
	await page.exposeFunction('reportViolation', (v: string) => seen.push(v));
	await page.addInitScript(() => {
		document.addEventListener('securitypolicyviolation', (e) => {
			(window as unknown as { reportViolation(v: string): void }).reportViolation(
				`${e.violatedDirective} ${e.blockedURI} ${e.sourceFile}:${e.lineNumber}`
			);
		});
	});
	page.on('console', (m) => {
		if (/Content Security Policy/i.test(m.text())) seen.push(m.text());
	});
	return seen;
}

it('the app runs under its CSP, worker included, with no violation', async () => {
	const context = await browser.newContext({ viewport: { width: 1280, height: 900 } });
	const page = await context.newPage();
	const violations = await watchViolations(page);
	await page.goto(`${server.url}/signin`);
	await page.getByLabel(/e-?mail/i).fill(people.operator.email);
	await page.getByLabel(/password/i).fill(PASSWORD);
	await page.getByRole('button', { name: /sign in/i }).click();
	await page.waitForURL((url) => !url.pathname.startsWith('/signin'));
	await page.goto(`${server.url}/setups`);
	await page.waitForLoadState('networkidle');
	await page.goto(`${server.url}/planner`);
	await page.getByRole('img', { name: /^Flow portrait/ }).waitFor({ timeout: 20_000 });
	await page.getByRole('button', { name: 'Simulate', exact: true }).click();
	await page.getByTestId('sweep-exponent').waitFor({ timeout: 45_000 });
	expect(violations).toEqual([]);
	await context.close();
});

it('another site cannot frame the app', async () => {
	const context = await browser.newContext();
	const page = await context.newPage();
	await page.setContent(`<iframe src="${server.url}/signin"></iframe>`);
	const frame = await (await page.waitForSelector('iframe')).contentFrame();
	await frame!.waitForLoadState('load');
	// frame-ancestors 'none': the browser shows its own error page instead of the sign-in form.
	expect(await frame!.locator('input[name="email"]').count()).toBe(0);
	await context.close();
});
