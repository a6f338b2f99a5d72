// An operator silences one rule for a helium transfer from the silences page and sees it on the
// overview; then another person acknowledges a lock loss from the one-tap link in their alert
// e-mail, in a phone-sized window with no session.
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

beforeAll(async () => {
	mkdirSync(shots, { recursive: true });
	const seeded = await seedDataDir();
	token = seeded.token;
	server = await startServer(seeded.dataDir);
	browser = await launchChromium();
});

afterAll(async () => {
	await browser?.close();
	await server?.stop();
});

it('an operator silences a rule; another person acknowledges from the one-tap link on a phone', async () => {
	const desk = await browser.newPage({ viewport: { width: 1280, height: 900 } });
	await desk.goto(`${server.url}/signin?next=/silences`);
	await desk.getByLabel(/e-?mail/i).fill(people.operator.email);
	await desk.getByLabel(/password/i).fill(PASSWORD);
	await desk.getByRole('button', { name: /sign in/i }).click();
	await desk.waitForURL(/\/silences/);
	await desk.getByLabel('Rule').selectOption({ label: 'Occupancy imbalance' });
	await desk.getByLabel(/For \(minutes\)/).fill('90');
	await desk.getByLabel('Why').fill('helium transfer');
	await desk.getByRole('button', { name: 'Silence' }).click();
	await desk.getByTestId('silences').getByText('helium transfer').waitFor();
	await expect.poll(() => desk.getByTestId('silences').getByText(people.operator.name).count()).toBeGreaterThan(0);
	await desk.goto(`${server.url}/`);
	await desk.getByTestId('silence-note').getByText(/Occupancy imbalance/).waitFor();
	await desk.screenshot({ path: path.join(shots, 'silence-overview.png') });

	// Lock is lost (not the silenced rule): the admin's alert e-mail carries the one-tap link.
	const runId = await lockLossRun(server.wsUrl, token, 'phone-ack');
	// The run page shows the silence of its setup's rule too.
	await desk.goto(`${server.url}/runs/${runId}`);
	await desk.getByTestId('silence-note').getByText(/Occupancy imbalance/).waitFor();
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
}, 120_000);
