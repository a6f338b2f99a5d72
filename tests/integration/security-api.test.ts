// Cross-origin and non-JSON writes to the API, security headers, better-auth's admin routes,
// unstorable text and oversized bodies, over the real server.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { PASSWORD, people, seedDataDir, signIn, startServer, type RunningServer } from './support/server';

let server: RunningServer;
let setupId: string;

beforeAll(async () => {
	const seeded = await seedDataDir();
	setupId = seeded.setupId;
	server = await startServer(seeded.dataDir);
});
afterAll(async () => {
	await server?.stop();
});

async function setupNames(as: Awaited<ReturnType<typeof signIn>>) {
	const res = await as('/api/setups');
	return ((await res.json()).setups as { name: string }[]).map((s) => s.name);
}

describe('writes to the API', () => {
	it('refuses another origin, and a cookie with no Origin at all', async () => {
		const admin = await signIn(server, 'admin');
		const body = JSON.stringify({ name: 'From evil', order: 3, states: 6, mode_GHz: 5, nominal_mK: 12 });
		const evil = await admin('/api/setups', { method: 'POST', body, headers: { origin: 'https://evil.example' } });
		expect(evil.status).toBe(403);
		expect((await evil.json()).message).toMatch(/cross-origin write refused: Origin https:\/\/evil\.example/);

		const resolve = await admin('/api/incidents/any-id/resolve', {
			method: 'POST',
			headers: { origin: 'https://evil.example', 'content-type': '' }
		});
		expect(resolve.status).toBe(403);

		const noOrigin = await fetch(`${server.url}/api/setups`, { method: 'POST', body, headers: { 'content-type': 'application/json' } });
		expect(noOrigin.status).toBe(403);
		expect((await noOrigin.json()).message).toMatch(/no Origin header/);
		expect(await setupNames(admin)).not.toContain('From evil');
	});

	it('wants application/json, and still takes same-origin JSON', async () => {
		const admin = await signIn(server, 'admin');
		const plain = await admin('/api/setups', { method: 'POST', body: '{"name":"x"}', headers: { 'content-type': 'text/plain' } });
		expect(plain.status).toBe(415);
		expect((await plain.json()).message).toMatch(/Content-Type must be application\/json, not text\/plain/);
		const ok = await admin('/api/setups', {
			method: 'POST',
			body: JSON.stringify({ name: 'Same origin', order: 3, states: 6, mode_GHz: 5, nominal_mK: 12 })
		});
		expect(ok.status).toBe(201);
	});

	it('lets a bearer request without Origin reach authentication (a script with an API token)', async () => {
		const res = await fetch(`${server.url}/api/setups`, {
			method: 'POST',
			headers: { 'content-type': 'application/json', authorization: 'Bearer not-a-real-token' },
			body: '{}'
		});
		expect(res.status).toBe(401);
	});
});

describe('security headers', () => {
	it('puts a CSP with script hashes or nonces on pages, and the rest on every answer', async () => {
		const page = await fetch(`${server.url}/signin`);
		const csp = page.headers.get('content-security-policy') ?? '';
		expect(csp).toMatch(/frame-ancestors 'none'/);
		expect(csp).toMatch(/script-src 'self' ('nonce-|'sha256-)/);
		expect(csp).toMatch(/form-action 'self'/);
		const html = await page.text();
		for (const res of [page, await fetch(`${server.url}/api/health`), await fetch(`${server.url}/favicon.svg`)]) {
			expect(res.headers.get('x-content-type-options')).toBe('nosniff');
			expect(res.headers.get('referrer-policy')).toBe('same-origin');
			expect(res.headers.get('permissions-policy')).toMatch(/camera=\(\)/);
			// Served over plain http without PHASEWARDEN_HSTS: no HSTS.
			expect(res.headers.get('strict-transport-security')).toBeNull();
		}
		expect((await fetch(`${server.url}/api/health`)).headers.get('content-security-policy')).toMatch(/default-src 'none'/);
		const asset = html.match(/\/_app\/immutable\/[^"]+\.js/)?.[0];
		expect(asset).toBeTruthy();
		expect((await fetch(`${server.url}${asset}`)).headers.get('x-content-type-options')).toBe('nosniff');
	});
});

describe("better-auth's admin routes", () => {
	it('are closed over HTTP: no self-demotion, no impersonation around the app', async () => {
		const admin = await signIn(server, 'admin');
		const users = (await (await admin('/api/users')).json()).users as { id: string; email: string; role: string }[];
		const me = users.find((u) => u.email === people.admin.email)!;
		const observer = users.find((u) => u.email === people.observer.email)!;
		for (const [path, body] of [
			['/api/auth/admin/set-role', { userId: me.id, role: 'observer' }],
			['/api/auth/admin/impersonate-user', { userId: observer.id }],
			['/api/auth/admin/remove-user', { userId: observer.id }],
			['/api/auth/admin/ban-user', { userId: observer.id }]
		] as const) {
			const res = await admin(path, { method: 'POST', body: JSON.stringify(body) });
			expect(res.status, path).toBe(404);
		}
		const after = (await (await admin('/api/users')).json()).users as { email: string; role: string }[];
		expect(after.find((u) => u.email === people.admin.email)?.role).toBe('admin');
		expect(after.find((u) => u.email === people.observer.email)?.role).toBe('observer');
		// The app's own route still refuses self-demotion.
		const self = await admin(`/api/users/${me.id}`, { method: 'PATCH', body: JSON.stringify({ role: 'observer' }) });
		expect(self.status).toBe(400);
	});
});

describe('text the database cannot hold', () => {
	it('gets a 400 naming the field instead of a 500', async () => {
		const admin = await signIn(server, 'admin');
		const nul = await admin('/api/setups', {
			method: 'POST',
			body: JSON.stringify({ name: 'a\u0000b', order: 3, states: 6, mode_GHz: 5, nominal_mK: 12 })
		});
		expect(nul.status).toBe(400);
		expect((await nul.json()).message).toBe('name: must not contain NUL (U+0000)');
		// JSON.stringify escapes a lone surrogate as \ud800, which JSON.parse turns back into one.
		const lone = await admin(`/api/setups/${setupId}/tokens`, { method: 'POST', body: JSON.stringify({ label: 'x\ud800' }) });
		expect(lone.status).toBe(400);
		expect((await lone.json()).message).toBe('label: must not contain an unpaired surrogate');
		const query = await admin('/api/incidents?kind=%00');
		expect(query.status).toBe(400);
		expect((await query.json()).message).toMatch(/^kind: must not contain NUL/);
		const signin = await fetch(`${server.url}/api/auth/sign-in/email`, {
			method: 'POST',
			headers: { 'content-type': 'application/json', origin: server.url },
			body: JSON.stringify({ email: people.admin.email, password: `${PASSWORD}\u0000` })
		});
		expect(signin.status).toBe(400);
		expect((await signin.json()).message).toMatch(/^password: must not contain NUL/);
	});
});

describe('oversized bodies', () => {
	const big = (mb: number) => JSON.stringify({ email: 'x@lab.test', password: 'p'.repeat(mb * 1024 * 1024) });

	it('get 413 with a message on the sign-in route, an API route and a form action', async () => {
		for (const [path, type] of [
			['/api/auth/sign-in/email', 'application/json'],
			['/api/setups', 'application/json'],
			['/signin?/signIn', 'application/x-www-form-urlencoded']
		] as const) {
			const res = await fetch(`${server.url}${path}`, {
				method: 'POST',
				headers: { 'content-type': type, origin: server.url },
				body: big(50)
			});
			expect(res.status, path).toBe(413);
			expect((await res.json()).message, path).toMatch(/request body too large: \d+ bytes; the limit is \d+ bytes/);
		}
	});

	it('get 413 when the length is not declared (chunked)', async () => {
		const chunk = new TextEncoder().encode('x'.repeat(256 * 1024));
		let sent = 0;
		const body = new ReadableStream<Uint8Array>({
			pull(controller) {
				if (sent++ < 12) controller.enqueue(chunk);
				else controller.close();
			}
		});
		const res = await fetch(`${server.url}/api/auth/sign-in/email`, {
			method: 'POST',
			headers: { 'content-type': 'application/json', origin: server.url },
			body,
			duplex: 'half'
		} as RequestInit);
		expect(res.status).toBe(413);
		expect((await res.json()).message).toMatch(/request body too large/);
	});
});
