// People over the real server and the mail catcher: invitations, password reset, deactivation and
// personal API tokens, each checked against the role rules in src/lib/roles.ts.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { call, cookieOf, linkFromMail, postForm, signInAs } from './support/people';
import { PASSWORD, people, seedDataDir, startServer, type RunningServer, type Seeded } from './support/server';

let seeded: Seeded;
let server: RunningServer;
let admin: { cookie: string };
let operator: { cookie: string };

const setupBody = (name: string) => JSON.stringify({ name, order: 3, states: 6, mode_GHz: 5, nominal_mK: 10 });

async function addPerson(email: string, role: string, password = 'first-password-1') {
	const res = await call(server, '/api/users', admin, {
		method: 'POST',
		body: JSON.stringify({ email, name: email.split('@')[0], role, password })
	});
	expect(res.status).toBe(201);
	return ((await res.json()) as { user: { id: string } }).user.id;
}

async function newToken(who: { cookie: string }, label: string): Promise<{ id: string; secret: string }> {
	const res = await call(server, '/api/me/tokens', who, { method: 'POST', body: JSON.stringify({ label }) });
	expect(res.status).toBe(201);
	const body = (await res.json()) as { token: { id: string }; secret: string };
	return { id: body.token.id, secret: body.secret };
}

beforeAll(async () => {
	seeded = await seedDataDir();
	server = await startServer(seeded.dataDir);
	admin = await signInAs(server, people.admin.email, PASSWORD);
	operator = await signInAs(server, people.operator.email, PASSWORD);
});
afterAll(async () => {
	await server?.stop();
});

describe('invitations', () => {
	it('lets an invitee set their password once and sign in with the invited role', async () => {
		const email = 'new.operator@lab.test';
		const refused = await call(server, '/api/invitations', operator, {
			method: 'POST',
			body: JSON.stringify({ email: 'boss@lab.test', role: 'admin' })
		});
		expect(refused.status).toBe(403);
		const invited = await call(server, '/api/invitations', operator, { method: 'POST', body: JSON.stringify({ email, role: 'operator' }) });
		expect(invited.status).toBe(201);
		const pending = (await (await call(server, '/api/invitations', operator)).json()) as { invitations: { email: string }[] };
		expect(pending.invitations.map((i) => i.email)).toContain(email);

		const link = await linkFromMail(server, operator.cookie, email, '/invite/');
		expect((await fetch(`${server.url}${link}`)).status).toBe(200);
		const mismatch = await postForm(server, `${link}?/accept`, {
			name: 'New Operator',
			password: 'chosen-password-1',
			confirm: 'other-password-1'
		});
		expect(mismatch.status).toBe(400);
		const accepted = await postForm(server, `${link}?/accept`, {
			name: 'New Operator',
			password: 'chosen-password-1',
			confirm: 'chosen-password-1'
		});
		expect(accepted.status).toBe(303);
		expect(cookieOf(accepted)).toContain('session_token');

		const invitee = await signInAs(server, email, 'chosen-password-1');
		expect(invitee.status).toBe(200);
		expect((await call(server, '/api/setups', invitee, { method: 'POST', body: setupBody('Invitee fridge') })).status).toBe(201);
		expect((await call(server, '/api/users', invitee)).status).toBe(403);
		const { users } = (await (await call(server, '/api/users', admin)).json()) as {
			users: { email: string; role: string; name: string }[];
		};
		expect(users.find((u) => u.email === email)).toMatchObject({ role: 'operator', name: 'New Operator' });

		// The link works once: the page and the action both refuse it now, and no second account appears.
		expect((await fetch(`${server.url}${link}`)).status).toBe(410);
		const again = await postForm(server, `${link}?/accept`, { name: 'Intruder', password: 'intruder-pass-1', confirm: 'intruder-pass-1' });
		expect(again.status).toBe(410);
		expect((await signInAs(server, email, 'intruder-pass-1')).status).toBe(401);
		const pendingAfter = (await (await call(server, '/api/invitations', operator)).json()) as { invitations: { email: string }[] };
		expect(pendingAfter.invitations.map((i) => i.email)).not.toContain(email);
	});

	it('refuses a withdrawn invitation and an address that already has an account', async () => {
		const taken = await call(server, '/api/invitations', admin, {
			method: 'POST',
			body: JSON.stringify({ email: people.observer.email, role: 'observer' })
		});
		expect(taken.status).toBe(400);
		const email = 'withdrawn@lab.test';
		const res = await call(server, '/api/invitations', admin, { method: 'POST', body: JSON.stringify({ email, role: 'admin' }) });
		const { invitation } = (await res.json()) as { invitation: { id: string } };
		const link = await linkFromMail(server, admin.cookie, email, '/invite/');
		// An operator may not withdraw an admin invitation; an admin may.
		expect((await call(server, `/api/invitations/${invitation.id}`, operator, { method: 'DELETE' })).status).toBe(403);
		expect((await call(server, `/api/invitations/${invitation.id}`, admin, { method: 'DELETE' })).status).toBe(200);
		expect((await fetch(`${server.url}${link}`)).status).toBe(410);
	});
});

describe('password reset', () => {
	it('answers the same for known and unknown addresses, and a reset ends every session', async () => {
		const email = 'forgetful@lab.test';
		await addPerson(email, 'observer');
		const older = await signInAs(server, email, 'first-password-1');
		const newer = await signInAs(server, email, 'first-password-1');
		expect((await call(server, '/api/setups', older)).status).toBe(200);

		const known = await postForm(server, '/forgot-password?/request', { email });
		const unknown = await postForm(server, '/forgot-password?/request', { email: 'nobody@lab.test' });
		expect(known.status).toBe(unknown.status);
		const sentText = 'If that address has an account here';
		expect(await known.text()).toContain(sentText);
		expect(await unknown.text()).toContain(sentText);

		const link = await linkFromMail(server, admin.cookie, email, '/reset-password/');
		const reset = await postForm(server, `${link}?/reset`, { password: 'second-password-2', confirm: 'second-password-2' });
		expect(reset.status).toBe(303);
		expect(reset.headers.get('location')).toBe('/signin?reset=1');

		expect((await call(server, '/api/setups', older)).status).toBe(401);
		expect((await call(server, '/api/setups', newer)).status).toBe(401);
		expect((await signInAs(server, email, 'first-password-1')).status).toBe(401);
		expect((await signInAs(server, email, 'second-password-2')).status).toBe(200);
		// The link is spent.
		const reused = await postForm(server, `${link}?/reset`, { password: 'third-password-3', confirm: 'third-password-3' });
		expect(reused.status).toBe(410);
	});
});

describe('deactivation', () => {
	it('stops sign-in, sessions and tokens, and can be undone', async () => {
		const email = 'leaving@lab.test';
		const id = await addPerson(email, 'operator');
		const session = await signInAs(server, email, 'first-password-1');
		const token = await newToken(session, 'leaving script');
		expect((await call(server, '/api/setups', { token: token.secret })).status).toBe(200);

		expect(
			(await call(server, `/api/users/${id}/active`, operator, { method: 'PUT', body: JSON.stringify({ active: false }) })).status
		).toBe(403);
		const off = await call(server, `/api/users/${id}/active`, admin, { method: 'PUT', body: JSON.stringify({ active: false }) });
		expect(off.status).toBe(200);
		expect((await call(server, '/api/setups', session)).status).toBe(401);
		expect((await call(server, '/api/setups', { token: token.secret })).status).toBe(401);
		expect((await signInAs(server, email, 'first-password-1')).status).toBe(403);
		// No reset link for a deactivated person (the mail would be sent before the form answers).
		expect((await postForm(server, '/forgot-password?/request', { email })).status).toBe(200);
		const mail = (await (await call(server, '/api/dev/mail', admin)).json()) as { messages: { to: string[] }[] };
		expect(mail.messages.filter((m) => m.to.includes(email))).toHaveLength(0);

		expect((await call(server, `/api/users/${id}/active`, admin, { method: 'PUT', body: JSON.stringify({ active: true }) })).status).toBe(
			200
		);
		expect((await signInAs(server, email, 'first-password-1')).status).toBe(200);
		expect((await call(server, '/api/setups', { token: token.secret })).status).toBe(200);
	});

	it('refuses to deactivate the last active admin', async () => {
		const { users } = (await (await call(server, '/api/users', admin)).json()) as { users: { id: string; email: string }[] };
		const me = users.find((u) => u.email === people.admin.email)!;
		const res = await call(server, `/api/users/${me.id}/active`, admin, { method: 'PUT', body: JSON.stringify({ active: false }) });
		expect(res.status).toBe(409);
		expect(((await res.json()) as { message: string }).message).toMatch(/last active admin/);
	});
});

describe('personal API tokens', () => {
	it('can do what its person may and nothing more, follows demotion, and stops when revoked', async () => {
		const observer = await signInAs(server, people.observer.email, PASSWORD);
		const observerToken = await newToken(observer, 'observer script');
		expect(observerToken.secret.startsWith('pwp_')).toBe(true);
		expect((await call(server, '/api/setups', { token: observerToken.secret })).status).toBe(200);
		expect(
			(await call(server, '/api/setups', { token: observerToken.secret }, { method: 'POST', body: setupBody('Observer fridge') })).status
		).toBe(403);

		const operatorToken = await newToken(operator, 'operator script');
		expect(
			(await call(server, '/api/setups', { token: operatorToken.secret }, { method: 'POST', body: setupBody('Token fridge') })).status
		).toBe(201);
		expect((await call(server, '/api/users', { token: operatorToken.secret })).status).toBe(403);
		const adminToken = await newToken(admin, 'admin script');
		expect((await call(server, '/api/users', { token: adminToken.secret })).status).toBe(200);

		// The token acts with its person's role as it is now.
		const email = 'demoted@lab.test';
		const id = await addPerson(email, 'operator');
		const demotedToken = await newToken(await signInAs(server, email, 'first-password-1'), 'demoted script');
		expect(
			(await call(server, '/api/setups', { token: demotedToken.secret }, { method: 'POST', body: setupBody('Before demotion') })).status
		).toBe(201);
		expect((await call(server, `/api/users/${id}`, admin, { method: 'PATCH', body: JSON.stringify({ role: 'observer' }) })).status).toBe(
			200
		);
		expect(
			(await call(server, '/api/setups', { token: demotedToken.secret }, { method: 'POST', body: setupBody('After demotion') })).status
		).toBe(403);

		// Agent tokens and made-up tokens are not personal tokens.
		expect((await call(server, '/api/setups', { token: seeded.token })).status).toBe(401);
		expect((await call(server, '/api/setups', { token: 'pwp_made-up' })).status).toBe(401);

		const listed = (await (await call(server, '/api/me/tokens', observer)).json()) as {
			tokens: { id: string; lastUsedAt: string | null }[];
		};
		expect(listed.tokens.find((t) => t.id === observerToken.id)?.lastUsedAt).not.toBeNull();
		// Only the owner can revoke: someone else's id is unknown to them.
		expect((await call(server, `/api/me/tokens/${observerToken.id}`, operator, { method: 'DELETE' })).status).toBe(404);
		expect((await call(server, `/api/me/tokens/${observerToken.id}`, observer, { method: 'DELETE' })).status).toBe(200);
		expect((await call(server, '/api/setups', { token: observerToken.secret })).status).toBe(401);
	});
});

describe('pages', () => {
	it('shows a new token once on the settings page, and the invitations page only to operators and admins', async () => {
		const observer = await signInAs(server, people.observer.email, PASSWORD);
		const made = await postForm(server, '/settings?/createApiToken', { label: 'page token' }, observer.cookie);
		expect(made.status).toBe(200);
		const secret = /pwp_[A-Za-z0-9_-]+/.exec(await made.text())?.[0];
		expect(secret).toBeDefined();
		expect((await call(server, '/api/setups', { token: secret! })).status).toBe(200);
		const later = await (await fetch(`${server.url}/settings`, { headers: { cookie: observer.cookie } })).text();
		expect(later).toContain('page token');
		expect(later).not.toContain(secret!);

		expect((await fetch(`${server.url}/invitations`, { headers: { cookie: observer.cookie } })).status).toBe(403);
		const invitePage = await fetch(`${server.url}/invitations`, { headers: { cookie: operator.cookie } });
		expect(invitePage.status).toBe(200);
		// Operators are offered only the roles they may invite.
		const html = await invitePage.text();
		expect(html).toContain('<option value="operator"');
		expect(html).not.toContain('<option value="admin"');
	});
});

describe('invitation expiry', () => {
	let short: RunningServer;
	beforeAll(async () => {
		short = await startServer((await seedDataDir()).dataDir, undefined, { PHASEWARDEN_INVITE_TTL_S: '1' });
	});
	afterAll(async () => {
		await short?.stop();
	});

	it('refuses a link after its expiry', async () => {
		const shortAdmin = await signInAs(short, people.admin.email, PASSWORD);
		const email = 'late@lab.test';
		const res = await call(short, '/api/invitations', shortAdmin, { method: 'POST', body: JSON.stringify({ email, role: 'observer' }) });
		expect(res.status).toBe(201);
		const link = await linkFromMail(short, shortAdmin.cookie, email, '/invite/');
		await new Promise((r) => setTimeout(r, 1500));
		expect((await fetch(`${short.url}${link}`)).status).toBe(410);
		const late = await postForm(short, `${link}?/accept`, { name: 'Late', password: 'late-password-1', confirm: 'late-password-1' });
		expect(late.status).toBe(410);
		expect((await signInAs(short, email, 'late-password-1')).status).toBe(401);
	});
});
