// In a real browser with JavaScript: an operator adds a setup (the form's schema checks in the page
// first), then makes an agent token and sets raw-frame retention on the setup's page.
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, expect, it } from 'vitest';
import { seedDataDir, startServer, type RunningServer } from '../integration/support/server';
import { launchChromium } from './chromium';
import { signInOnPage } from './sign-in';

const shots = path.resolve(import.meta.dirname, '../../test-results');
let server: RunningServer;
let browser: Browser;

beforeAll(async () => {
	mkdirSync(shots, { recursive: true });
	server = await startServer((await seedDataDir()).dataDir);
	browser = await launchChromium();
});
afterAll(async () => {
	await browser?.close();
	await server?.stop();
});

it('adds a setup, then an agent token and a retention on its page', async () => {
	const page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
	try {
		await signInOnPage(page, server.url, 'operator');
		await page.goto(`${server.url}/setups`);
		await page.getByLabel('Name').fill('Fridge Browser · doubler');
		await page.getByLabel('Order M').fill('2');
		await page.getByLabel('Phase states K').fill('4');
		await page.getByLabel('Nominal temperature (mK)').fill('12');
		// The mode frequency is left empty: the page names it without a round trip.
		await page.getByRole('button', { name: 'Add setup' }).click();
		await page.getByText('mode_GHz is required').waitFor();
		expect(page.url()).toBe(`${server.url}/setups`);

		await page.getByLabel('Mode frequency (GHz)').fill('6.2');
		await page.getByRole('button', { name: 'Add setup' }).click();
		await page.waitForURL(/\/setups\/[\w-]+$/);
		await page.getByRole('heading', { name: 'Fridge Browser · doubler' }).waitFor();

		await page.getByRole('button', { name: 'Create token' }).click();
		await page.getByText('label is required').waitFor();
		await page.getByLabel('Label').first().fill('rack PC');
		await page.getByRole('button', { name: 'Create token' }).click();
		await page.getByText('New token “rack PC”: copy it now, it is not shown again.').waitFor();

		await page.getByLabel('Keep raw frames for (days)').fill('0');
		await page.getByRole('button', { name: 'Save' }).click();
		await page.getByText('rawRetentionDays is at least 1 day').waitFor();
		await page.getByLabel('Keep raw frames for (days)').fill('30');
		await page.getByRole('button', { name: 'Save' }).click();
		await page.getByText('Raw frames older than 30 days are deleted.').waitFor();
		await page.screenshot({ path: path.join(shots, 'setup-forms.png'), fullPage: true });
	} finally {
		await page.close();
	}
}, 90_000);
