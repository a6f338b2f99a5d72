// The run timeline in chromium: an operator zooms with the keyboard (the URL keeps the view),
// picks a time, adds a note and sees its pin, and follows an incident span to the incident; an
// observer sees the same note but no form; on a phone the tracks stack (screenshot saved).
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, expect, it } from 'vitest';
import { RUN, frame, startAgent } from '../integration/support/agent-socket';
import { people, seedDataDir, startServer, type RunningServer } from '../integration/support/server';
import { launchChromium } from './chromium';
import { signInOnPage } from './sign-in';

const shots = path.resolve(import.meta.dirname, '../../test-results');
let server: RunningServer;
let browser: Browser;
let runId: string;

beforeAll(async () => {
	mkdirSync(shots, { recursive: true });
	const seeded = await seedDataDir();
	server = await startServer(seeded.dataDir);
	browser = await launchChromium();
	const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'timeline-browser', name: 'Timeline browser run' });
	// 40 minutes at 1 Hz with lock lost for two minutes in the middle (an incident) and a lost stretch.
	const frames = Array.from({ length: 2400 }, (_, i) => frame(i + 1, i >= 1200 && i < 1320 ? 0.1 : 0.93)).filter(
		(f) => f.seq < 1800 || f.seq > 1860
	);
	for (let i = 0; i < frames.length; i += 300) agent.send({ type: 'frames', frames: frames.slice(i, i + 300) });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === 2400, 60_000);
	runId = agent.welcome.run;
	await agent.close();
});

afterAll(async () => {
	await browser?.close();
	await server?.stop();
});

async function signInAs(page: Page, who: keyof typeof people) {
	await signInOnPage(page, server.url, who);
}

async function withEvidence(page: Page, name: string, body: () => Promise<void>) {
	try {
		await body();
	} catch (err) {
		await page.screenshot({ path: path.join(shots, `${name}-failure.png`), fullPage: true }).catch(() => {});
		console.error(`page at failure: ${page.url()}\nserver output:\n${server.output().slice(-4000)}`);
		throw err;
	}
}

it('lets an operator zoom by keyboard, add a note at a picked time, and open an incident from its span', async () => {
	const page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
	await withEvidence(page, 'timeline-operator', async () => {
		await signInAs(page, 'operator');
		await page.goto(`${server.url}/runs/${runId}`);
		await page.getByRole('link', { name: /whole-run timeline/i }).click();
		await page.waitForURL(/\/timeline/);
		const area = page.getByRole('application', { name: /run timeline/i });
		await area.waitFor();
		await expect.poll(() => page.locator('[data-gap]').count()).toBe(1);

		await area.focus();
		await page.keyboard.press('+');
		await expect.poll(() => new URL(page.url()).searchParams.get('from_ms')).not.toBeNull();
		const zoomed = new URL(page.url());
		const width_ms = Number(zoomed.searchParams.get('to_ms')) - Number(zoomed.searchParams.get('from_ms'));
		expect(width_ms).toBeGreaterThan(0);
		expect(width_ms).toBeLessThan(40 * 60_000);
		await page.keyboard.press('Escape');
		await expect.poll(() => new URL(page.url()).searchParams.has('from_ms')).toBe(false);

		// Click a time on the tracks, write the note, see its pin.
		const box = (await area.boundingBox())!;
		await page.mouse.click(box.x + box.width * 0.2, box.y + 40);
		await page.getByRole('textbox', { name: /^note/i }).fill('helium transfer');
		await page.getByRole('button', { name: /add note/i }).click();
		await page.getByRole('button', { name: /note: helium transfer/i }).waitFor();
		await page.screenshot({ path: path.join(shots, 'timeline-operator.png'), fullPage: true });

		await page.locator('a[data-severity]').first().click();
		await page.waitForURL(/\/incidents\//);
		await page.getByRole('link', { name: /see it on the run timeline/i }).waitFor();
	});
	await page.close();
});

it('shows an observer the notes without the form, and stacks the tracks on a phone', async () => {
	const page = await browser.newPage({ viewport: { width: 390, height: 844 }, hasTouch: true });
	await withEvidence(page, 'timeline-phone', async () => {
		await signInAs(page, 'observer');
		await page.goto(`${server.url}/runs/${runId}/timeline`);
		await page.getByRole('button', { name: /note: helium transfer/i }).waitFor();
		expect(await page.getByRole('button', { name: /add note/i }).count()).toBe(0);
		await page.getByText(/operators add them/i).waitFor();
		// Nothing wider than the phone: the page does not scroll sideways.
		const overflow = await page.evaluate(() => document.documentElement.scrollWidth - window.innerWidth);
		expect(overflow).toBeLessThanOrEqual(0);
		await page.screenshot({ path: path.join(shots, 'timeline-phone.png'), fullPage: true });
	});
	await page.close();
});
