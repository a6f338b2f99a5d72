// In a real browser with JavaScript: an operator invites someone, the invitee joins from the e-mailed
// link (with the form's checks running in the page) and makes an API token on their settings page.
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, expect, it } from 'vitest';
import { linkFromMail, signInAs } from '../integration/support/people';
import { PASSWORD, people, seedDataDir, startServer, type RunningServer } from '../integration/support/server';
import { launchChromium } from './chromium';

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

it('invites, joins from the link, and makes an API token shown once', async () => {
	const page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
	try {
		await page.goto(`${server.url}/signin`);
		await page.getByLabel(/e-?mail/i).fill(people.operator.email);
		await page.getByLabel(/^password/i).fill(PASSWORD);
		await page.getByRole('button', { name: /sign in/i }).click();
		await page.waitForURL((url) => !url.pathname.startsWith('/signin'));

		await page.getByRole('link', { name: 'Invite' }).click();
		await page.getByLabel('E-mail').fill('joiner@lab.test');
		await page.getByLabel('Role').selectOption('operator');
		await page.getByRole('button', { name: 'Send invitation' }).click();
		await page.getByText('Invitation sent to joiner@lab.test.').waitFor();
		await page.getByText('joiner@lab.test').first().waitFor();

		const reader = await signInAs(server, people.operator.email, PASSWORD);
		const link = await linkFromMail(server, reader.cookie, 'joiner@lab.test', '/invite/');
		const joiner = await (await browser.newContext()).newPage();
		await joiner.goto(`${server.url}${link}`);
		await joiner.getByText('as operator, with joiner@lab.test').waitFor();
		await joiner.getByLabel('Your name').fill('Joan Joiner');
		await joiner.getByLabel('New password').fill('joiner-password-1');
		await joiner.getByLabel('The same password again').fill('joiner-password-2');
		await joiner.getByRole('button', { name: 'Create my account' }).click();
		await joiner.getByText('the two passwords differ').waitFor();
		await joiner.getByLabel('The same password again').fill('joiner-password-1');
		await joiner.getByRole('button', { name: 'Create my account' }).click();
		await joiner.waitForURL(`${server.url}/`);
		await joiner.getByRole('link', { name: 'Joan Joiner' }).click();
		await joiner.waitForURL(/\/settings$/);

		await joiner.getByLabel('What it is for').fill('nightly export');
		await joiner.getByRole('button', { name: 'Make a token' }).click();
		const secret = await joiner.getByLabel('New API token').inputValue();
		expect(secret).toMatch(/^pwp_/);
		const res = await fetch(`${server.url}/api/setups`, { headers: { authorization: `Bearer ${secret}` } });
		expect(res.status).toBe(200);
		await joiner.getByText('nightly export').first().waitFor();
	} catch (err) {
		await page.screenshot({ path: path.join(shots, 'people-failure.png'), fullPage: true }).catch(() => {});
		console.error(`server output:\n${server.output().slice(-4000)}`);
		throw err;
	}
});
