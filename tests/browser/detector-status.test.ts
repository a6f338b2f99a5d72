// Silence is never mistaken for health: the run page lists each detector with a word for whether
// it can see and why not, and updates it live; the rules page says which rules can run at all.
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, expect, it } from 'vitest';
import { RUN, frame, startAgent, type TestAgent } from '../integration/support/agent-socket';
import { people, seedDataDir, signIn, startServer, type RunningServer, type Seeded } from '../integration/support/server';
import { launchChromium } from './chromium';
import { signInOnPage } from './sign-in';

const shots = path.resolve(import.meta.dirname, '../../test-results');
let seeded: Seeded;
let server: RunningServer;
let browser: Browser;
let agent: TestAgent;

beforeAll(async () => {
	mkdirSync(shots, { recursive: true });
	seeded = await seedDataDir();
	server = await startServer(seeded.dataDir);
	browser = await launchChromium();
	agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'status-ui', name: 'Status run' });
	agent.send({ type: 'frames', frames: Array.from({ length: 20 }, (_, i) => frame(i + 1)) });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === 20);
});

afterAll(async () => {
	await agent?.close();
	await browser?.close();
	await server?.stop();
});

async function signedIn(who: keyof typeof people, width: number): Promise<Page> {
	const context = await browser.newContext({ viewport: { width, height: 900 } });
	const page = await context.newPage();
	await signInOnPage(page, server.url, who);
	return page;
}

const row = (page: Page, kind: string) => page.locator(`[data-detector="${kind}"]`).first();

it('the run page shows which detectors cannot see, and turns them on live when a model is saved', async () => {
	const page = await signedIn('observer', 390);
	await page.goto(`${server.url}/runs/${agent.welcome.run}`);
	await expect.poll(() => row(page, 'switching_burst').textContent()).toMatch(/Not watching/);
	expect(await row(page, 'switching_burst').textContent()).toMatch(/no rate model/i);
	expect(await row(page, 'occupancy_imbalance').textContent()).toMatch(/needs 100 \(60 more\)/);
	expect(await row(page, 'lock_lost').textContent()).toMatch(/Watching/);
	await expect.poll(() => page.getByText(/detectors cannot see/).count()).toBe(1);
	await page.locator('#detectors-h').scrollIntoViewIfNeeded();
	await page.screenshot({ path: path.join(shots, 'detector-status-run-phone.png'), fullPage: true });

	const operator = await signIn(server, 'operator');
	const model = { process: 'switching', W0_per_s: Math.E * 2, A: 2, mode_GHz: 5, nominal_mK: 12, source: 'manual' };
	expect((await operator(`/api/setups/${seeded.setupId}/rate-model`, { method: 'PUT', body: JSON.stringify(model) })).status).toBe(200);
	// The next committed frame pushes the new status through the live stream; no reload.
	agent.send({ type: 'frames', frames: [frame(21)] });
	await expect.poll(() => row(page, 'switching_burst').getAttribute('data-active'), { timeout: 10_000 }).toBe('true');
	expect(await row(page, 'switching_burst').textContent()).not.toMatch(/Not watching/);
	await page.context().close();

	const wide = await signedIn('observer', 1280);
	await wide.goto(`${server.url}/runs/${agent.welcome.run}`);
	await expect.poll(() => row(wide, 'rate_drift').getAttribute('data-active')).toBe('true');
	await wide.screenshot({ path: path.join(shots, 'detector-status-run-desktop.png'), fullPage: true });
	await wide.context().close();
});

it('the rules page says which rules can run on the setup', async () => {
	const page = await signedIn('observer', 390);
	const operator = await signIn(server, 'operator');
	const { rules } = await (await operator(`/api/setups/${seeded.setupId}/rules`)).json();
	const off = {
		...rules,
		occupancy_imbalance: { ...rules.occupancy_imbalance, enabled: false },
		rate_drift: { ...rules.rate_drift, processes: ['switching', 'escape'] }
	};
	expect((await operator(`/api/setups/${seeded.setupId}/rules`, { method: 'PUT', body: JSON.stringify(off) })).status).toBe(200);
	await page.goto(`${server.url}/setups/${seeded.setupId}/rules`);
	const readiness = page.locator('section').filter({ has: page.getByRole('heading', { name: 'What can run on this setup' }) });
	await expect.poll(() => readiness.locator('[data-detector="occupancy_imbalance"]').textContent()).toMatch(/Off/);
	expect(await readiness.locator('[data-detector="switching_burst"]').textContent()).toMatch(/Can run/);
	expect(await readiness.locator('[data-detector="rate_drift"]').textContent()).toMatch(/Partly.*No escape rate model/s);
	await readiness.scrollIntoViewIfNeeded();
	await page.screenshot({ path: path.join(shots, 'detector-status-rules-phone.png'), fullPage: false });
	await page.context().close();
});
