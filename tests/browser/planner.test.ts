// The rate planner in a real browser: an operator runs a noise sweep in the Web Worker and saves
// the model for the seeded setup; an observer sees it but has no save control, and the API refuses them.
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, expect, it } from 'vitest';
import { PASSWORD, people, seedDataDir, startServer, type RunningServer } from '../integration/support/server';
import { launchChromium } from './chromium';

const shots = path.resolve(import.meta.dirname, '../../test-results');
let server: RunningServer;
let browser: Browser;
let setupId: string;

beforeAll(async () => {
	mkdirSync(shots, { recursive: true });
	const seeded = await seedDataDir();
	setupId = seeded.setupId;
	server = await startServer(seeded.dataDir);
	browser = await launchChromium();
});

afterAll(async () => {
	await browser?.close();
	await server?.stop();
});

async function signIn(page: Page, who: keyof typeof people) {
	await page.goto(`${server.url}/signin`);
	await page.getByLabel(/e-?mail/i).fill(people[who].email);
	await page.getByLabel(/password/i).fill(PASSWORD);
	await page.getByRole('button', { name: /sign in/i }).click();
	await page.waitForURL((url) => !url.pathname.startsWith('/signin'));
}

/** The portrait is drawn in the browser only, so once it is there the page is hydrated. */
async function openPlanner(page: Page, query = '') {
	await page.goto(`${server.url}/planner${query}`);
	await page.getByRole('img', { name: /^Flow portrait/ }).waitFor({ timeout: 20_000 });
}

async function simulate(page: Page) {
	await page.getByRole('button', { name: 'Simulate', exact: true }).click();
	const exponent = page.getByTestId('sweep-exponent');
	await exponent.waitFor({ timeout: 45_000 });
	return (await exponent.textContent()) ?? '';
}

it('an operator simulates a sweep in the worker and saves it as the setup’s rate model', async () => {
	const context = await browser.newContext({ viewport: { width: 1280, height: 900 } });
	const page = await context.newPage();
	await signIn(page, 'operator');
	await page.getByRole('link', { name: 'Planner' }).first().click();
	await page.waitForURL(/\/planner/);
	await page.getByRole('img', { name: /^Flow portrait/ }).waitFor({ timeout: 20_000 });

	// Starting from the seeded setup (M = 3, K = 6 states, 5 GHz, 12 mK) fills the operating point.
	await page.getByLabel('Start from a setup').selectOption(setupId);
	await page.waitForURL((url) => url.searchParams.get('setup') === setupId);
	await expect.poll(() => page.getByLabel('Order M').inputValue()).toBe('3');
	await expect.poll(() => page.getByLabel(/^Nonlinearity/).inputValue()).toBe('junction');
	await expect.poll(() => page.getByLabel(/^Mode frequency/).inputValue()).toBe('5');
	// Six phase states, as the junction-type term gives for M = 3 (fixed-points.ts; DESIGN.md: K = 2M).
	await expect.poll(() => page.getByRole('img', { name: /^Flow portrait/ }).getAttribute('aria-label')).toMatch(/6 phase states/);

	const text = await simulate(page);
	// The exponent is printed with its uncertainty: "R = <number> ± <number>".
	const m = /R = (-?[\d.]+) ± ([\d.]+)/.exec(text);
	expect(m, `exponent text was "${text}"`).not.toBeNull();
	expect(Number(m![2])).toBeGreaterThan(0);
	// Activation: W ∝ e^{−R/λ} with R > 0, escape rarer at smaller noise (Marthaler & Dykman 2006,
	// Phys. Rev. A 73, 042108, as listed in REFERENCES.md).
	expect(Number(m![1])).toBeGreaterThan(0);

	await page.getByLabel('Save for setup').selectOption(setupId);
	await page.getByRole('button', { name: 'Save as rate model', exact: true }).click();
	await page
		.getByRole('status')
		.filter({ hasText: new RegExp(`Saved\\s+for Test fridge · tripler by ${people.operator.name} at`) })
		.waitFor({ timeout: 15_000 });
	await page.screenshot({ path: path.join(shots, 'planner-operator.png'), fullPage: true });

	// The server has it: the escape model, from the planner, with finite W0 and A.
	const res = await page.request.get(`${server.url}/api/setups/${setupId}/rate-model`);
	expect(res.status()).toBe(200);
	const body = await res.json();
	const model = body.escapeModel;
	expect(model).toMatchObject({ process: 'escape', source: 'planner', savedBy: people.operator.name, mode_GHz: 5 });
	expect(Number.isFinite(model.W0_per_s) && model.W0_per_s > 0).toBe(true);
	expect(Number.isFinite(model.A) && model.A > 0).toBe(true);
	// The saved exponent is A = R/λ_q at the page's default λ_q = 0.05: the noise enters the
	// simulator only as λ(2n̄+1) (noise strength ∝ γ·λ·(2n̄+1), REFERENCES.md, facts of the trade),
	// so R/λ at λ = λ_q(2n̄+1) reads A/(2n̄+1). Checked to the page's 3 significant figures.
	expect(Math.abs((model.A * 0.05) / Number(m![1]) - 1)).toBeLessThan(0.005);
	expect(model.reference).toEqual({ detuning: 0, damping: 1, drive: 0.333 });

	// Reloaded, the forecast reads the saved model back.
	await openPlanner(page, `?setup=${setupId}`);
	await page
		.getByText(new RegExp(`Saved for Test fridge · tripler by ${people.operator.name}`))
		.first()
		.waitFor();
	await context.close();
});

it('an observer sees the planner and its forecast but cannot save, and the API refuses them', async () => {
	const context = await browser.newContext({ viewport: { width: 390, height: 844 } });
	const page = await context.newPage();
	await signIn(page, 'observer');
	await openPlanner(page, `?setup=${setupId}`);

	// A long sweep shows its progress, and Cancel stops the worker itself (it closes).
	await page.getByLabel('Trajectories').fill('2000');
	const started = page.waitForEvent('worker');
	await page.getByRole('button', { name: 'Simulate', exact: true }).click();
	const worker = await started;
	const closed = new Promise<void>((resolve) => worker.on('close', () => resolve()));
	const bar = page.getByRole('progressbar', { name: 'Simulation progress' });
	await expect.poll(async () => Number(await bar.getAttribute('aria-valuenow')), { timeout: 20_000 }).toBeGreaterThan(0);
	await expect.poll(() => page.getByText(/^\d+ %$/).count()).toBe(1);
	await page.getByRole('button', { name: 'Cancel', exact: true }).click();
	await closed;
	await page.getByText('Simulation cancelled; the worker was stopped.').waitFor();
	expect(await bar.count()).toBe(0);

	// A short sweep still runs for them.
	await page.getByLabel('Noise strengths λ').fill('0.4, 0.3');
	await page.getByLabel('Trajectories').fill('12');
	await simulate(page);
	expect(await page.getByRole('button', { name: 'Save as rate model' }).count()).toBe(0);
	expect(await page.getByRole('button', { name: 'Check and fit' }).count()).toBe(0);
	await page.screenshot({ path: path.join(shots, 'planner-observer-phone.png'), fullPage: true });

	const model = { process: 'escape', W0_per_s: 1e5, A: 10, mode_GHz: 5, nominal_mK: 12, source: 'planner' };
	const put = await page.request.put(`${server.url}/api/setups/${setupId}/rate-model`, {
		data: model,
		headers: { origin: server.url }
	});
	expect(put.status()).toBe(403);

	// The page's own form action refuses them as well.
	const action = await page.request.post(`${server.url}/planner?/saveModel`, {
		form: { setupId, model: JSON.stringify(model) },
		headers: { origin: server.url, accept: 'application/json', 'x-sveltekit-action': 'true' }
	});
	const result = await action.json();
	expect(result).toMatchObject({ type: 'failure', status: 403 });

	// Nothing was stored by either attempt: the operator's model is still the current one.
	const current = await (await page.request.get(`${server.url}/api/setups/${setupId}/rate-model`)).json();
	expect(current.escapeModel.savedBy).toBe(people.operator.name);
	await context.close();
});
