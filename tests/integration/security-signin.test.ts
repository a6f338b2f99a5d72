// The sign-in brake over the real server: per account and per address, on the JSON route and the form,
// with X-Forwarded-For believed only from the configured proxy.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { PASSWORD, people, seedDataDir, startServer, type RunningServer } from './support/server';

let server: RunningServer;
let untrusting: RunningServer;

beforeAll(async () => {
	// The test process plays the reverse proxy: its X-Forwarded-For names the client.
	server = await startServer((await seedDataDir()).dataDir, undefined, { PHASEWARDEN_TRUSTED_PROXY: '127.0.0.1' });
	untrusting = await startServer((await seedDataDir()).dataDir);
});
afterAll(async () => {
	await server?.stop();
	await untrusting?.stop();
});

function signInJson(target: RunningServer, email: string, password: string, from?: string) {
	return fetch(`${target.url}/api/auth/sign-in/email`, {
		method: 'POST',
		headers: { 'content-type': 'application/json', origin: target.url, ...(from ? { 'x-forwarded-for': from } : {}) },
		body: JSON.stringify({ email, password })
	});
}

describe('the JSON sign-in route', () => {
	it('refuses 30 wrong guesses on one account with a growing wait, while others still sign in', async () => {
		const statuses: number[] = [];
		const waits: number[] = [];
		for (let i = 0; i < 30; i++) {
			const res = await signInJson(server, people.operator.email, `wrong-${i}`, '198.51.100.66');
			statuses.push(res.status);
			if (res.status === 429) {
				waits.push(Number(res.headers.get('retry-after')));
				expect((await res.json()).message).toMatch(/try again in \d+ s/);
			} else await res.body?.cancel();
		}
		expect(statuses.slice(0, 5)).toEqual([401, 401, 401, 401, 401]);
		expect(statuses.slice(5).every((s) => s === 429)).toBe(true);
		expect(waits.every((w) => w >= 1)).toBe(true);

		// The right password for the braked account is refused too while it waits, from anywhere.
		expect((await signInJson(server, people.operator.email, PASSWORD, '203.0.113.5')).status).toBe(429);
		// Another account from another address, and the admin from the guesser's own address, are not locked out.
		expect((await signInJson(server, people.observer.email, PASSWORD, '203.0.113.7')).status).toBe(200);
		expect((await signInJson(server, people.admin.email, PASSWORD, '198.51.100.66')).status).toBe(200);
	});

	it('brakes one address guessing across many accounts, but not a neighbour', async () => {
		for (let i = 0; i < 20; i++) {
			const res = await signInJson(server, `nobody-${i}@lab.test`, 'guess', '198.51.100.99');
			expect(res.status).toBe(401);
		}
		const refused = await signInJson(server, people.admin.email, PASSWORD, '198.51.100.99');
		expect(refused.status).toBe(429);
		expect(Number(refused.headers.get('retry-after'))).toBeGreaterThanOrEqual(1);
		expect((await signInJson(server, people.admin.email, PASSWORD, '198.51.100.100')).status).toBe(200);
	});

	it('does not believe X-Forwarded-For from a peer that is not a configured proxy', async () => {
		// Every guess claims a fresh address; without a trusted proxy they all count against the socket's.
		for (let i = 0; i < 20; i++) {
			const res = await signInJson(untrusting, `nobody-${i}@lab.test`, 'guess', `192.0.2.${i + 1}`);
			expect(res.status).toBe(401);
		}
		expect((await signInJson(untrusting, people.admin.email, PASSWORD, '192.0.2.200')).status).toBe(429);
	});
});

describe('the sign-in form', () => {
	it('shares the brake and shows when to try again', async () => {
		const post = (password: string) =>
			fetch(`${server.url}/signin?/signIn`, {
				method: 'POST',
				headers: {
					'content-type': 'application/x-www-form-urlencoded',
					accept: 'text/html',
					origin: server.url,
					'x-forwarded-for': '203.0.113.40'
				},
				body: new URLSearchParams({ email: people.admin.email, password }),
				redirect: 'manual'
			});
		const statuses: number[] = [];
		for (let i = 0; i < 6; i++) {
			const res = await post(`wrong-${i}`);
			statuses.push(res.status);
			if (i === 5) {
				expect(res.headers.get('retry-after')).toMatch(/^\d+$/);
				expect(await res.text()).toMatch(/too many failed sign-ins; try again in \d+ s/);
			} else await res.body?.cancel();
		}
		expect(statuses).toEqual([400, 400, 400, 400, 400, 429]);
		// The same account through the JSON route is braked as well: one count for both ways in.
		expect((await signInJson(server, people.admin.email, PASSWORD, '203.0.113.41')).status).toBe(429);
	});
});
