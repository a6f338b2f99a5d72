// The morning report in the browser: a person sets their report time, the report of the night
// arrives, opens from the list, links each run to its timeline, and prints without navigation;
// the run summary page draws the transition heat map. Screenshots go to test-results/.
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, expect, it } from 'vitest';
import { RUN, frame, startAgent } from '../integration/support/agent-socket';
import { people, seedDataDir, signIn, startServer, type RunningServer, type Seeded } from '../integration/support/server';
import { launchChromium } from './chromium';
import { signInOnPage } from './sign-in';

const shots = path.resolve(import.meta.dirname, '../../test-results');
const NIGHT = Date.parse('2026-11-30T23:00:00Z');
const MORNING = Date.parse('2026-12-01T08:00:00Z');
let seeded: Seeded;
let server: RunningServer;
let browser: Browser;
let runId: string;

beforeAll(async () => {
	mkdirSync(shots, { recursive: true });
	seeded = await seedDataDir();
	server = await startServer(seeded.dataDir, undefined, { PHASEWARDEN_TEST_HOOKS: '1' });
	browser = await launchChromium();
	const admin = await signIn(server, 'admin');
	await admin('/api/dev/reports/clock', { method: 'POST', body: JSON.stringify({ now_ms: NIGHT - 3_600_000 }) });
	const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'browser-night', name: 'Browser night' });
	runId = agent.welcome.run;
	// Switches mostly between neighbouring states of the six, a few across.
	const transitions = (seq: number) =>
		Array.from({ length: 36 }, (_, i) => (i === (seq % 6) * 6 + ((seq + 1) % 6) ? 2 : i === 3 && seq % 50 === 0 ? 1 : 0));
	const frames = Array.from({ length: 900 }, (_, i) => ({
		...frame(i + 1, i > 300 && i < 320 ? 0.2 : 0.93, NIGHT),
		transitions: transitions(i + 1)
	}));
	for (let i = 0; i < frames.length; i += 100) agent.send({ type: 'frames', frames: frames.slice(i, i + 100) });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === 900, 30_000);
	await agent.close();
});

afterAll(async () => {
	await browser?.close();
	await server?.stop();
});

async function signedIn(who: keyof typeof people, width: number): Promise<Page> {
	const context = await browser.newContext({ viewport: { width, height: 900 } });
	const page = await context.newPage();
	await signInOnPage(page, server.url, who);
	return page;
}

it('an operator sets the report time, opens the night’s report, follows a run to its timeline and prints it', async () => {
	const page = await signedIn('operator', 1280);
	await page.goto(`${server.url}/settings`);
	await page.getByLabel('Report time').fill('09:00');
	await page.getByRole('checkbox', { name: 'Test fridge · tripler' }).check();
	await page.getByRole('button', { name: 'Save report settings' }).click();
	await expect.poll(() => page.getByRole('status').textContent()).toContain('Saved');
	const operator = await signIn(server, 'operator');
	expect(await (await operator('/api/reports/settings')).json()).toMatchObject({ reportTime: '09:00', followSetups: [seeded.setupId] });

	const admin = await signIn(server, 'admin');
	const tick = async (now_ms: number) =>
		(await (await admin('/api/dev/reports/clock', { method: 'POST', body: JSON.stringify({ now_ms }) })).json()).reports;
	// 08:00 UTC is not the operator's time (09:00 UTC); 09:00 is.
	const at8 = await tick(MORNING);
	const at9 = await tick(MORNING + 3_600_000);
	expect(at9.length).toBe(1);
	expect(at8.every((r: { reportId: string }) => r.reportId !== at9[0].reportId)).toBe(true);

	await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Reports' }).click();
	await page.getByRole('link', { name: /2026-11-30 09:00 – 2026-12-01 09:00/ }).click();
	await expect.poll(() => page.getByRole('heading', { name: /Browser night/ }).count()).toBe(1);
	const timeline = page.getByRole('link', { name: 'Open the timeline of this span' });
	expect(await timeline.getAttribute('href')).toBe(
		`/runs/${runId}/timeline?from_ms=${MORNING + 3_600_000 - 86_400_000}&to_ms=${MORNING + 3_600_000}`
	);
	expect(await page.getByText(/Acknowledged by|Not acknowledged/).count()).toBeGreaterThan(0);
	await page.screenshot({ path: path.join(shots, 'morning-report-desktop.png'), fullPage: true });

	await page.emulateMedia({ media: 'print' });
	expect(await page.getByRole('navigation', { name: 'Main' }).isVisible()).toBe(false);
	expect(await page.getByRole('button', { name: 'Print' }).isVisible()).toBe(false);
	await page.screenshot({ path: path.join(shots, 'morning-report-print.png'), fullPage: true });
	await page.emulateMedia({ media: 'screen' });

	// The morning's walk: from the report to the run's night on the timeline, into the lock loss,
	// a note pinned to it, and the incident's evidence drawn.
	await timeline.click();
	await page.waitForURL(/\/timeline\?/);
	const area = page.getByRole('application', { name: /run timeline/i });
	await area.waitFor();
	const incidentSpan = page.locator('a[data-severity]').first();
	await incidentSpan.waitFor();
	await area.focus();
	const before = new URL(page.url());
	await page.keyboard.press('+');
	await expect.poll(() => new URL(page.url()).searchParams.get('from_ms')).not.toBe(before.searchParams.get('from_ms'));
	const box = (await area.boundingBox())!;
	await page.mouse.click(box.x + box.width * 0.5, box.y + 40);
	await page.getByRole('textbox', { name: /^note/i }).fill('pump unlocked during the night');
	await page.getByRole('button', { name: /add note/i }).click();
	await page.getByRole('button', { name: /note: pump unlocked/i }).waitFor();
	await page.locator('a[data-severity]').first().click();
	await page.waitForURL(/\/incidents\//);
	const level = page.locator('svg[data-chart="level"]');
	await level.waitFor();
	expect(await level.getAttribute('aria-label')).toMatch(/lock/i);
	await page.screenshot({ path: path.join(shots, 'morning-walk-evidence.png'), fullPage: true });
	await page.context().close();
});

it('the run summary page shows the transitions as a heat map, on a phone too', async () => {
	const page = await signedIn('observer', 390);
	await page.goto(`${server.url}/runs/${runId}/summary`);
	await expect.poll(() => page.getByRole('heading', { name: 'Summary of Browser night' }).count()).toBe(1);
	const map = page.getByRole('img', { name: /Switches between phase states/ });
	expect(await map.count()).toBe(1);
	expect(await map.locator('rect').count()).toBe(36);
	await page.screenshot({ path: path.join(shots, 'run-summary-phone.png'), fullPage: true });
	// Five minutes of the night, typed as lab wall-clock times (UTC here): frames seq 300–599.
	await page.getByLabel(/^From/).fill('2026-11-30T23:05');
	await page.getByLabel(/^To/).fill('2026-11-30T23:10');
	await page.getByRole('button', { name: 'Summarise span' }).click();
	await expect.poll(() => page.locator('dt:text-is("Frames") + dd').textContent()).toBe('300');
	await page.context().close();
});
