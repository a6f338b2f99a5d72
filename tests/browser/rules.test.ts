// Rules per setup in the browser: an operator changes a threshold and saves it, a bad value is
// named beside its field and stores nothing (with and without JavaScript), an observer reads the
// rules without any input, and a replay with other rules shows what they would have raised.
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import type { Browser, BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, expect, it } from 'vitest';
import { RUN, frame, startAgent } from '../integration/support/agent-socket';
import { PASSWORD, people, seedDataDir, startServer, type RunningServer, type Seeded } from '../integration/support/server';
import { launchChromium } from './chromium';

const shots = path.resolve(import.meta.dirname, '../../test-results');
let seeded: Seeded;
let server: RunningServer;
let browser: Browser;
let runId: string;

// Two lock losses: 8 low windows (seq 11–18) and 3 (seq 31–33). The default lock_lost rule opens
// after 5 consecutive low windows, so only the first is raised live.
const lockOf = (seq: number) => ((seq > 10 && seq <= 18) || (seq > 30 && seq <= 33) ? 0.1 : 0.93);

beforeAll(async () => {
	mkdirSync(shots, { recursive: true });
	seeded = await seedDataDir();
	server = await startServer(seeded.dataDir);
	browser = await launchChromium();
	const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'rules-run', name: 'Rules test run' });
	agent.send({ type: 'frames', frames: Array.from({ length: 45 }, (_, i) => frame(i + 1, lockOf(i + 1))) });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === 45);
	agent.send({ type: 'end', reason: 'rules test done' });
	await new Promise((r) => agent.ws.once('close', r));
	runId = agent.welcome.run;
});

afterAll(async () => {
	await browser?.close();
	await server?.stop();
});

async function signedIn(
	who: keyof typeof people,
	options: { javaScriptEnabled?: boolean; width?: number } = {}
): Promise<{ context: BrowserContext; page: Page }> {
	const context = await browser.newContext({
		viewport: { width: options.width ?? 1280, height: 900 },
		javaScriptEnabled: options.javaScriptEnabled ?? true
	});
	const page = await context.newPage();
	await page.goto(`${server.url}/signin`);
	await page.getByLabel(/e-?mail/i).fill(people[who].email);
	await page.getByLabel(/password/i).fill(PASSWORD);
	await page.getByRole('button', { name: /sign in/i }).click();
	await page.waitForURL((url) => !url.pathname.startsWith('/signin'));
	return { context, page };
}

/** Runs a step, leaving a screenshot and the server's log behind when it fails. */
async function step(page: Page, name: string, body: () => Promise<void>) {
	try {
		await body();
	} catch (err) {
		await page.screenshot({ path: path.join(shots, `rules-failure-${name}.png`), fullPage: true }).catch(() => {});
		console.error(`page at failure: ${page.url()}\nserver output:\n${server.output().slice(-4000)}`);
		throw err;
	}
}

async function rulesNow(page: Page) {
	const res = await page.request.get(`${server.url}/api/setups/${seeded.setupId}/rules`);
	expect(res.status()).toBe(200);
	return res.json();
}

const lockSection = (page: Page) => page.locator('details').filter({ has: page.getByRole('heading', { name: 'Lock lost', exact: true }) });

it('an operator changes a threshold and saves it; a bad value is named and stores nothing', async () => {
	const { context, page } = await signedIn('operator');
	await step(page, 'operator', async () => {
		await page.goto(`${server.url}/setups/${seeded.setupId}`);
		await page.getByRole('link', { name: /detector rules/i }).click();
		await page.waitForURL(/\/rules$/);
		const threshold = lockSection(page).getByLabel(/^Low below/);
		// The default in force (rules.ts: lock_lost.threshold 0.5).
		expect(await threshold.inputValue()).toBe('0.5');

		await threshold.fill('0.4');
		await lockSection(page).getByText('· changed').first().waitFor();
		await page.getByRole('button', { name: 'Save rules' }).click();
		await page.getByText(/Saved 1 change/).waitFor();
		await page.screenshot({ path: path.join(shots, 'rules-operator.png'), fullPage: true });

		// The API agrees: the new value, the rule's version up from 1 to 2, and who changed what.
		const saved = await rulesNow(page);
		expect(saved.rules.lock_lost).toMatchObject({ threshold: 0.4, version: 2 });
		expect(saved.rules.agent_silent.version).toBe(1);
		expect(saved.history[0]).toMatchObject({ field: 'lock_lost.threshold', oldValue: 0.5, newValue: 0.4, actorName: people.operator.name });
		await page.getByRole('cell', { name: 'lock_lost.threshold' }).or(page.getByText('lock_lost.threshold')).first().waitFor();

		// Lock quality lies between 0 and 1 (wire protocol): 1.5 is refused as one types.
		const fresh = lockSection(page).getByLabel(/^Low below/);
		await fresh.fill('1.5');
		await lockSection(page).getByText('must be between 0 and 1').waitFor();
		expect(await fresh.getAttribute('aria-invalid')).toBe('true');
		await page.getByRole('button', { name: 'Save rules' }).click();
		// 1.5 also puts "good at or above" (0.7) under the low threshold, which the schema refuses too.
		await page.getByText(/2 fields need fixing first/).waitFor();
		await lockSection(page).getByText('must be at least threshold, so that the incident does not flap').waitFor();
		await page.screenshot({ path: path.join(shots, 'rules-invalid.png') });
		expect((await rulesNow(page)).rules.lock_lost).toMatchObject({ threshold: 0.4, version: 2 });
	});
	await context.close();

	// Without JavaScript the form posts to the server, and the API's 400 message lands beside the field.
	const plain = await signedIn('operator', { javaScriptEnabled: false });
	await step(plain.page, 'nojs', async () => {
		await plain.page.goto(`${server.url}/setups/${seeded.setupId}/rules`);
		const field = lockSection(plain.page).getByLabel(/^Low below/);
		await field.fill('1.5');
		await plain.page.getByRole('button', { name: 'Save rules' }).click();
		await plain.page.waitForLoadState('load');
		// The message is tied to its input (aria-describedby), so it is read out with the field.
		const describedBy =
			(await lockSection(plain.page)
				.getByLabel(/^Low below/)
				.getAttribute('aria-describedby')) ?? '';
		const errorId = describedBy.split(' ').find((id) => id.endsWith('-err'));
		expect(errorId).toBeTruthy();
		expect(await plain.page.locator(`[id="${errorId}"]`).textContent()).toMatch(/must be between 0 and 1/);
		expect(
			await lockSection(plain.page)
				.getByLabel(/^Low below/)
				.inputValue()
		).toBe('1.5');
		await plain.page.screenshot({ path: path.join(shots, 'rules-nojs-error.png') });
		expect((await rulesNow(plain.page)).rules.lock_lost).toMatchObject({ threshold: 0.4, version: 2 });
	});
	await plain.context.close();
});

it('an observer reads the rules and the rate models, with no input and no save button', async () => {
	const { context, page } = await signedIn('observer');
	await step(page, 'observer', async () => {
		await page.goto(`${server.url}/setups/${seeded.setupId}/rules`);
		await page.getByRole('heading', { name: 'Detector rules' }).waitFor();
		const lock = page.locator('section').filter({ has: page.getByRole('heading', { name: 'Lock lost', exact: true }) });
		await lock.getByText('v2').waitFor();
		expect(await lock.locator('dd').first().textContent()).toMatch(/0\.4/);
		expect(await page.locator('main input:not([type=hidden]), main select, main textarea').count()).toBe(0);
		expect(await page.getByRole('button', { name: /save/i }).count()).toBe(0);
		await page.getByText(/changing them needs the operator role/i).waitFor();
		await page.screenshot({ path: path.join(shots, 'rules-observer.png'), fullPage: true });
		// The server refuses them anyway.
		const put = await page.request.put(`${server.url}/api/setups/${seeded.setupId}/rules`, {
			data: {},
			headers: { origin: server.url }
		});
		expect(put.status()).toBe(403);
	});
	await context.close();
});

it('a replay with more sensitive lock rules shows the loss the live rules let pass, and changes nothing', async () => {
	const { context, page } = await signedIn('operator');
	await step(page, 'replay', async () => {
		const before = await (await page.request.get(`${server.url}/api/incidents?run=${runId}`)).json();
		expect(before.incidents).toHaveLength(1);

		await page.goto(`${server.url}/runs/${runId}`);
		await page.getByRole('link', { name: 'Replay with other rules' }).click();
		await page.waitForURL(/\/replay$/);
		await page.getByText('Nothing real changes.').waitFor();
		await lockSection(page).locator('summary').click();
		await lockSection(page)
			.getByLabel(/^Opens after/)
			.fill('2');
		await page.getByRole('button', { name: 'Replay', exact: true }).click();
		await page.getByRole('heading', { name: /Only by the replay/ }).waitFor({ timeout: 20_000 });

		// Two consecutive low windows now suffice: the short loss (seq 31–33) opens at its second window.
		await page.getByRole('heading', { name: 'Only by the replay (1)' }).waitFor();
		await page
			.locator('section[aria-labelledby=only-replay-h]')
			.getByText(/Would have raised at .*\(seq 32\)/)
			.waitFor();
		await page.getByRole('heading', { name: 'Raised by both (1)' }).waitFor();
		await page.getByRole('heading', { name: 'Only live (0)' }).waitFor();
		await page.getByRole('img', { name: /Timeline of 1 incident kinds/ }).waitFor();
		await page.screenshot({ path: path.join(shots, 'rules-replay.png'), fullPage: true });

		// Nothing real changed: the same live incidents, and the rules in force keep 5 windows.
		const after = await (await page.request.get(`${server.url}/api/incidents?run=${runId}`)).json();
		expect(after.incidents).toEqual(before.incidents);
		expect((await rulesNow(page)).rules.lock_lost.windows).toBe(5);

		await page.setViewportSize({ width: 390, height: 844 });
		await page.screenshot({ path: path.join(shots, 'rules-replay-phone.png'), fullPage: true });
		await page.goto(`${server.url}/setups/${seeded.setupId}/rules`);
		await page.screenshot({ path: path.join(shots, 'rules-phone.png'), fullPage: true });
	});
	await context.close();
});

it('an operator enters a rate model by hand: a bad value is named beside its field, a good one is saved', async () => {
	const { context, page } = await signedIn('operator');
	await step(page, 'rate-model', async () => {
		await page.goto(`${server.url}/setups/${seeded.setupId}/rules`);
		const card = page.locator('section[aria-labelledby="rm-switching-h"]');
		await card.getByText(/by hand…/).click();
		// rate-model-schema.ts: W0_per_s must be a positive rate; the browser says so as one types.
		await card.getByLabel(/^W₀/).fill('-3');
		await card.getByText('W0_per_s must be a positive rate').waitFor();
		expect(await card.getByLabel(/^W₀/).getAttribute('aria-invalid')).toBe('true');
		await card.getByLabel(/^W₀/).fill('0.002');
		await card.getByLabel(/^Activation exponent A/).fill('40');
		await card.getByRole('button', { name: 'Save switching model' }).click();
		await page.getByText(/Saved\. It applies to frames committed from now on/).waitFor();
		const { rateModel } = await (await page.request.get(`${server.url}/api/setups/${seeded.setupId}/rate-model`)).json();
		expect(rateModel).toMatchObject({ process: 'switching', W0_per_s: 0.002, A: 40, source: 'manual', savedBy: people.operator.name });
	});
	await context.close();

	// Without JavaScript the server names the field, and the form opens again with what was typed.
	const plain = await signedIn('operator', { javaScriptEnabled: false });
	await step(plain.page, 'rate-model-nojs', async () => {
		await plain.page.goto(`${server.url}/setups/${seeded.setupId}/rules`);
		const card = () => plain.page.locator('section[aria-labelledby="rm-escape-h"]');
		await card()
			.getByText(/by hand…/)
			.click();
		await card().getByLabel(/^W₀/).fill('fast');
		await card().getByRole('button', { name: 'Save escape model' }).click();
		await plain.page.waitForLoadState('load');
		await card().getByText('“fast” is not a number').waitFor();
		expect(await card().getByLabel(/^W₀/).inputValue()).toBe('fast');
		const { escapeModel } = await (await plain.page.request.get(`${server.url}/api/setups/${seeded.setupId}/rate-model`)).json();
		expect(escapeModel).toBeNull();
	});
	await plain.context.close();
});

it('an aux limit row is added, refused with its own field named and saved without JavaScript, then removed with it', async () => {
	const plain = await signedIn('operator', { javaScriptEnabled: false });
	const { page } = plain;
	const auxSection = () => page.locator('details').filter({ has: page.getByRole('heading', { name: 'Aux limits', exact: true }) });
	await step(page, 'aux-nojs', async () => {
		await page.goto(`${server.url}/setups/${seeded.setupId}/rules`);
		await auxSection().getByRole('button', { name: 'Add a limit' }).click();
		await page.waitForLoadState('load');
		const rows = auxSection().locator('li');
		expect(await rows.count()).toBe(2);
		await rows
			.nth(1)
			.getByLabel(/^Aux name/)
			.fill('pump_dBm');
		await rows
			.nth(1)
			.getByLabel(/^Out below/)
			.fill('5');
		// rules.ts: clearAbove must be at least below (hysteresis), so 3 is refused on its own input.
		await rows
			.nth(1)
			.getByLabel(/^Back at or above/)
			.fill('3');
		await page.getByRole('button', { name: 'Save rules' }).click();
		await page.waitForLoadState('load');
		await auxSection().locator('li').nth(1).getByText('must be at least below, so that the incident does not flap').waitFor();
		expect((await rulesNow(page)).rules.aux_limit.limits).toHaveLength(1);

		await auxSection()
			.locator('li')
			.nth(1)
			.getByLabel(/^Back at or above/)
			.fill('6');
		await page.getByRole('button', { name: 'Save rules' }).click();
		await page.getByText(/Saved 1 change/).waitFor();
		expect((await rulesNow(page)).rules.aux_limit.limits).toMatchObject([
			{ name: 'mxc_mK' },
			{ name: 'pump_dBm', below: 5, clearAbove: 6 }
		]);
	});
	await plain.context.close();

	// With JavaScript the row goes in the page, and the save carries the rules as superforms' JSON.
	const scripted = await signedIn('operator');
	await step(scripted.page, 'aux-js', async () => {
		const p = scripted.page;
		await p.goto(`${server.url}/setups/${seeded.setupId}/rules`);
		const aux = p.locator('details').filter({ has: p.getByRole('heading', { name: 'Aux limits', exact: true }) });
		await aux.getByRole('button', { name: 'Remove limit pump_dBm' }).click();
		expect(await aux.locator('li').count()).toBe(1);
		await p.getByRole('button', { name: 'Save rules' }).click();
		await p.getByText(/Saved 1 change/).waitFor();
		const { rules } = await rulesNow(p);
		expect(rules.aux_limit.limits).toMatchObject([{ name: 'mxc_mK' }]);
		expect(rules.aux_limit.limits).toHaveLength(1);
		expect(rules.aux_limit.version).toBe(3);
	});
	await scripted.context.close();
});
