// A person opens a rate-drift incident and sees its evidence drawn: the windows' counts against
// the prediction, the drift statistic against its decision limit, sentences with the numbers,
// no raw JSON; on a phone too (screenshots saved). The alert e-mail says the same in sentences.
// The run page draws the simulated agent's IQ histograms as the phase-space picture.
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, expect, it } from 'vitest';
import { RUN, frame, startAgent } from '../integration/support/agent-socket';
import { PASSWORD, people, seedDataDir, signIn, startServer, type RunningServer, type Seeded } from '../integration/support/server';
import { uniformStream, poissonKnuth } from '../support/random';
import { launchChromium } from './chromium';
import { createSimulator } from '../../agent/simulate';
import { EXACT_UNIT_RATE_MODEL } from '../integration/support/exact-model';

const shots = path.resolve(import.meta.dirname, '../../test-results');
let seeded: Seeded;
let server: RunningServer;
let browser: Browser;
let driftId = '';

beforeAll(async () => {
	mkdirSync(shots, { recursive: true });
	seeded = await seedDataDir();
	server = await startServer(seeded.dataDir);
	browser = await launchChromium();
	const operator = await signIn(server, 'operator');
	// W ≈ W0·e^{−A} = 1 switch per second at 12 mK (5 GHz); an exact model, no learned baseline.
	const model = EXACT_UNIT_RATE_MODEL;
	expect((await operator(`/api/setups/${seeded.setupId}/rate-model`, { method: 'PUT', body: JSON.stringify(model) })).status).toBe(200);
	const rules = await (await operator(`/api/setups/${seeded.setupId}/rules`)).json();
	const changed = {
		...rules.rules,
		switching_burst: { ...rules.rules.switching_burst, enabled: false },
		rate_drift: { ...rules.rules.rate_drift, baseline_h: 0 }
	};
	expect((await operator(`/api/setups/${seeded.setupId}/rules`, { method: 'PUT', body: JSON.stringify(changed) })).status).toBe(200);
	const u = uniformStream(99);
	const frames = Array.from({ length: 400 }, (_, i) => ({ ...frame(i + 1), dwell_s: 1, switches: poissonKnuth(i >= 200 ? 2 : 1, u) }));
	const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'drift-run', name: 'Drift run' });
	for (let i = 0; i < frames.length; i += 100) agent.send({ type: 'frames', frames: frames.slice(i, i + 100) });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === 400, 30_000);
	await agent.close();
	const { incidents } = await (await operator(`/api/incidents?run=${agent.welcome.run}`)).json();
	driftId = incidents.find((i: { kind: string }) => i.kind === 'rate_drift').id;
});

afterAll(async () => {
	await browser?.close();
	await server?.stop();
});

it('the rate-drift incident draws its windows and its CUSUM, in words and charts, on desktop and phone', async () => {
	const page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
	try {
		await page.goto(`${server.url}/signin`);
		await page.getByLabel(/e-?mail/i).fill(people.observer.email);
		await page.getByLabel(/password/i).fill(PASSWORD);
		await page.getByRole('button', { name: /sign in/i }).click();
		await page.waitForURL((url) => !url.pathname.startsWith('/signin'));
		await page.goto(`${server.url}/incidents/${driftId}`);
		await page.getByRole('heading', { name: /Rate drift · switching/ }).waitFor();

		const counts = page.locator('svg[data-chart="counts"]');
		await counts.waitFor();
		expect(await counts.locator('[data-part="bar"]').count()).toBeGreaterThan(10);
		expect(await counts.locator('[data-part="bar"][data-focus="true"]').count()).toBeGreaterThan(0);
		expect(await counts.locator('[data-part="expected"]').count()).toBe(1);
		const cusum = page.locator('svg[data-chart="cusum"]');
		expect(await cusum.locator('[data-part="decision-limit"]').count()).toBe(1);
		expect(await cusum.locator('[data-part="statistic"]').count()).toBe(1);
		expect(await cusum.getAttribute('aria-label')).toMatch(/decision limit of [\d.]+/);
		await expect.poll(() => page.getByText(/as the detector recorded/).count()).toBe(1);

		const text = await page.locator('main').innerText();
		expect(text).toMatch(/drifted above its prediction since \d\d:\d\d:\d\d UTC/);
		expect(text).toMatch(/times the prediction, \d+(\.\d)? % interval \([\d.]+–[\d.]+\)/);
		expect(text).not.toMatch(/[{}]|"\w+":|\b\w+_\w+\b/);
		await page.screenshot({ path: path.join(shots, 'incident-evidence-desktop.png'), fullPage: true });

		await page.setViewportSize({ width: 390, height: 844 });
		// the page itself never scrolls sideways; a chart too wide for the phone scrolls in its own box
		expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(390);
		expect((await counts.boundingBox())!.width).toBeGreaterThanOrEqual(470);
		await page.screenshot({ path: path.join(shots, 'incident-evidence-phone.png'), fullPage: true });
	} catch (err) {
		await page.screenshot({ path: path.join(shots, 'incident-evidence-failure.png'), fullPage: true }).catch(() => {});
		console.error(`server output:\n${server.output().slice(-3000)}`);
		throw err;
	} finally {
		await page.close();
	}
});

it('the drift alert e-mail says it in sentences with the interval and no field names', async () => {
	const operator = await signIn(server, 'operator');
	const mail = await expect
		.poll(async () =>
			((await (await operator('/api/dev/mail')).json()).messages as { text: string }[]).find((m) =>
				m.text.includes(`/incidents/${driftId}`)
			)
		)
		.toBeTruthy();
	void mail;
	const { messages } = await (await operator('/api/dev/mail')).json();
	const text: string = messages.find((m: { text: string }) => m.text.includes(`/incidents/${driftId}`)).text.replace(/\s+/g, ' ');
	expect(text).toContain('The switching rate on Test fridge');
	expect(text).toMatch(/times the prediction, \d+(\.\d)? % interval \([\d.]+–[\d.]+\)/);
	const body = text.slice(text.indexOf('What happened'), text.indexOf('Open the incident'));
	expect(body).not.toMatch(/\b[A-Za-z]+_[A-Za-z0-9_]+\b|W0 per|nominal m k/);
});

it('the run page draws the simulated agent’s IQ histograms with one ringed lobe per state', async () => {
	const sim = createSimulator({
		seed: 7,
		startMs: Date.now() - 300_000,
		order: 3,
		states: 6,
		iqBins: 24,
		loseLockAtMin: 100,
		switchRate_per_s: 1
	});
	const frames = Array.from({ length: 120 }, () => sim.next());
	const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'iq-run', name: 'IQ run' });
	agent.send({ type: 'frames', frames });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === 120, 30_000);
	await agent.close();
	const page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
	try {
		await page.goto(`${server.url}/signin`);
		await page.getByLabel(/e-?mail/i).fill(people.observer.email);
		await page.getByLabel(/password/i).fill(PASSWORD);
		await page.getByRole('button', { name: /sign in/i }).click();
		await page.waitForURL((url) => !url.pathname.startsWith('/signin'));
		await page.goto(`${server.url}/runs/${agent.welcome.run}?iq_span=all`);
		const picture = page.locator('svg[data-chart="phase-space"]');
		await picture.waitFor();
		expect(await picture.locator('[data-part="lobe"]').count()).toBe(6);
		expect(await picture.locator('[data-part="bin"]').count()).toBeGreaterThan(50);
		expect(await picture.getAttribute('aria-label')).toMatch(/Summed IQ histogram of 120 frames/);
		await picture.scrollIntoViewIfNeeded();
		await page
			.locator('#iq-h')
			.locator('xpath=..')
			.locator('xpath=..')
			.screenshot({ path: path.join(shots, 'phase-space.png') });
	} finally {
		await page.close();
	}
});
