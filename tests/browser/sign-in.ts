// Signs a test person in through the real sign-in form.
import type { Page } from 'playwright-core';
import { PASSWORD, people } from '../integration/support/server';

export async function signInOnPage(page: Page, serverUrl: string, who: keyof typeof people) {
	await page.goto(`${serverUrl}/signin`);
	await page.getByLabel(/e-?mail/i).fill(people[who].email);
	await page.getByLabel(/password/i).fill(PASSWORD);
	await page.getByRole('button', { name: /sign in/i }).click();
	await page.waitForURL((url) => !url.pathname.startsWith('/signin'));
}
