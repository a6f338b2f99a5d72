// An operator signs in, watches a live run lose lock, and acknowledges the incident from the run page.
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, expect, it } from 'vitest';
import { RUN, frame, startAgent, type TestAgent } from '../integration/support/agent-socket';
import { PASSWORD, people, seedDataDir, startServer, type RunningServer } from '../integration/support/server';
import { launchChromium } from './chromium';

const shots = path.resolve(import.meta.dirname, '../../test-results');
let server: RunningServer;
let browser: Browser;
let agent: TestAgent;

beforeAll(async () => {
	mkdirSync(shots, { recursive: true });
	const seeded = await seedDataDir();
	server = await startServer(seeded.dataDir);
	browser = await launchChromium();
	agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'browser-run', name: 'Browser test run' });
	agent.send({ type: 'frames', frames: Array.from({ length: 20 }, (_, i) => frame(i + 1, 0.93)) });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === 20);
});

afterAll(async () => {
	await agent?.close();
	await browser?.close();
	await server?.stop();
});

it('shows the live run, the lock-loss incident arriving without reload, and acknowledges it', async () => {
	const page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
	try {
		await watchLiveRun(page);
	} catch (err) {
		// Leave evidence for whoever reads the CI log: what the page showed and what the server said.
		await page.screenshot({ path: path.join(shots, 'failure.png'), fullPage: true }).catch(() => {});
		console.error(`page at failure: ${page.url()}\nserver output:\n${server.output().slice(-4000)}`);
		throw err;
	}
});

async function watchLiveRun(page: Page) {
	await page.goto(`${server.url}/`);
	await expect.poll(() => page.url()).toContain('/signin');
	await page.getByLabel(/e-?mail/i).fill(people.operator.email);
	await page.getByLabel(/password/i).fill(PASSWORD);
	await page.getByRole('button', { name: /sign in/i }).click();
	await page.waitForURL((url) => !url.pathname.startsWith('/signin'));

	// From the overview to the live run.
	await page
		.getByRole('link', { name: /Browser test run/ })
		.first()
		.click();
	await page.waitForURL(/\/runs\//);
	await page
		.getByText(/Browser test run/)
		.first()
		.waitFor();
	await page
		.getByText(/streaming/i)
		.first()
		.waitFor();

	// Lock is lost while the page is open: the incident must appear live.
	agent.send({ type: 'frames', frames: Array.from({ length: 8 }, (_, i) => frame(21 + i, 0.12)) });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === 28);
	const acknowledge = page.getByRole('button', { name: /acknowledge/i }).first();
	await acknowledge.waitFor({ timeout: 15_000 });
	await page.screenshot({ path: path.join(shots, 'run-lock-lost.png'), fullPage: true });

	await acknowledge.click();
	await page
		.getByText(/acknowledged/i)
		.first()
		.waitFor({ timeout: 15_000 });
	await page.screenshot({ path: path.join(shots, 'run-acknowledged.png'), fullPage: true });

	// The server agrees: the incident is acknowledged by the operator.
	const res = await page.request.get(`${server.url}/api/incidents?run=${agent.welcome.run}`);
	const body = await res.json();
	expect(body.incidents).toHaveLength(1);
	expect(body.incidents[0]).toMatchObject({ kind: 'lock_lost', state: 'acknowledged' });
}
