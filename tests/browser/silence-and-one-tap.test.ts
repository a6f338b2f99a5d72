// An operator builds the setup's on-call rota on its on-call page and silences one rule for a
// helium transfer from the silences page, and sees both on the overview; then the person the rota
// puts on call (and only they) is paged for a lock loss and acknowledges it from the one-tap link
// in their alert e-mail, in a phone-sized window with no session.
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, expect, it } from 'vitest';
import { lockLossRun } from '../integration/support/lock-loss';
import { poll } from '../integration/support/poll';
import { PASSWORD, people, seedDataDir, signIn, startServer, type RunningServer } from '../integration/support/server';
import { launchChromium } from './chromium';

const shots = path.resolve(import.meta.dirname, '../../test-results');
let server: RunningServer;
let browser: Browser;
let token: string;
let setupId: string;

beforeAll(async () => {
	mkdirSync(shots, { recursive: true });
	const seeded = await seedDataDir();
	token = seeded.token;
	setupId = seeded.setupId;
	server = await startServer(seeded.dataDir);
	// Who may be on call: the setup's operator and admin members (set up here, not under test).
	const admin = await signIn(server, 'admin');
	const { user } = (await (await admin('/api/auth/get-session')).json()) as { user: { id: string } };
	const operator = await signIn(server, 'operator');
	const { user: op } = (await (await operator('/api/auth/get-session')).json()) as { user: { id: string } };
	for (const userId of [user.id, op.id])
		expect((await admin(`/api/setups/${setupId}/members`, { method: 'POST', body: JSON.stringify({ userId }) })).status).toBeLessThan(300);
	browser = await launchChromium();
});

afterAll(async () => {
	await browser?.close();
	await server?.stop();
});

const WEEKDAYS = ['Sunday', 'Monday', 'Tuesday', 'Wednesday', 'Thursday', 'Friday', 'Saturday'];

it('an operator sets up a rota and silences a rule; the person on call acknowledges from the one-tap link on a phone', async () => {
	const desk = await browser.newPage({ viewport: { width: 1280, height: 900 } });
	await desk.goto(`${server.url}/signin?next=/setups/${setupId}/oncall`);
	await desk.getByLabel(/e-?mail/i).fill(people.operator.email);
	await desk.getByLabel(/password/i).fill(PASSWORD);
	await desk.getByRole('button', { name: /sign in/i }).click();
	await desk.waitForURL(/\/oncall/);

	// The rota: the admin first, then the operator, handed over today at 00:00 (the lab's zone is
	// UTC here), so the admin is on call now and the operator backs them up.
	const today = new Date();
	await desk.getByRole('button', { name: `Add ${people.admin.name}` }).click();
	await desk.getByRole('button', { name: `Add ${people.operator.name}` }).click();
	await desk.getByLabel('Handover day').selectOption({ label: WEEKDAYS[today.getUTCDay()] });
	await desk.getByLabel('Handover time').fill('00:00');
	await desk.getByLabel('Starting on').fill(today.toISOString().slice(0, 10));
	await desk.getByLabel(/Critical: escalate after/).fill('15');
	await desk.getByRole('button', { name: 'Save rota' }).click();
	await desk.getByText('Rota saved.').waitFor();
	await expect
		.poll(async () => (await desk.locator('main header p', { hasText: 'Now:' }).first().textContent())?.replace(/\s+/g, ' '))
		.toContain(`Now: ${people.admin.name}, backed up by ${people.operator.name}.`);
	await desk.screenshot({ path: path.join(shots, 'rota-built.png'), fullPage: true });

	await desk.goto(`${server.url}/silences`);
	await desk.getByLabel('Rule').selectOption({ label: 'Occupancy imbalance' });
	await desk.getByLabel(/For \(minutes\)/).fill('90');
	await desk.getByLabel('Why').fill('helium transfer');
	await desk.getByRole('button', { name: 'Silence' }).click();
	await desk.getByTestId('silences').getByText('helium transfer').waitFor();
	await expect.poll(() => desk.getByTestId('silences').getByText(people.operator.name).count()).toBeGreaterThan(0);
	await desk.goto(`${server.url}/`);
	await desk
		.getByTestId('silence-note')
		.getByText(/Occupancy imbalance/)
		.waitFor();
	await desk.getByText(`On call now: ${people.admin.name}`).waitFor();
	await desk.screenshot({ path: path.join(shots, 'silence-overview.png') });

	// Lock is lost (not the silenced rule): the admin, on call, gets the alert e-mail with the one-tap link.
	const runId = await lockLossRun(server.wsUrl, token, 'phone-ack');
	// The run page shows the silence of its setup's rule too.
	await desk.goto(`${server.url}/runs/${runId}`);
	await desk
		.getByTestId('silence-note')
		.getByText(/Occupancy imbalance/)
		.waitFor();
	const operator = await signIn(server, 'operator');
	const link = await poll('the admin’s alert e-mail', async () => {
		const { messages } = (await (await operator('/api/dev/mail')).json()) as { messages: { to: string[]; text?: string }[] };
		const mail = messages.find((m) => m.to.includes(people.admin.email) && /^Acknowledge: /m.test(m.text ?? ''));
		return mail ? /^Acknowledge: (\S+)$/m.exec(mail.text!)![1] : null;
	});

	const phone = await browser.newContext({ viewport: { width: 390, height: 844 }, isMobile: true, hasTouch: true });
	try {
		const page = await phone.newPage();
		await page.goto(link);
		await page.getByText(people.admin.name).waitFor();
		await page.getByRole('button', { name: 'Acknowledge this incident' }).tap();
		await page.getByTestId('ack-done').waitFor();
		await page.screenshot({ path: path.join(shots, 'one-tap-acknowledge-phone.png') });
		expect(await phone.cookies()).toEqual([]);
	} finally {
		await phone.close();
	}
	const { incidents } = (await (await operator('/api/incidents?kind=lock_lost')).json()) as { incidents: { id: string; state: string }[] };
	expect(incidents.map((i) => i.state)).toEqual(['acknowledged']);
	// The rota decided: the operator, second on it, was not paged.
	const { messages } = (await (await operator('/api/dev/mail')).json()) as { messages: { to: string[]; subject: string }[] };
	expect(messages.filter((m) => m.to.includes(people.operator.email) && /^\[Phasewarden\] Critical/.test(m.subject))).toEqual([]);
}, 120_000);
