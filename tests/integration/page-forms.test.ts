// The pages' own forms posted without JavaScript (superforms on the server, the schemas the API
// uses) and the pages' loaders refusing whom the JSON API refuses (src/lib/roles.ts).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { postForm, signInAs } from './support/people';
import { PASSWORD, people, seedDataDir, startServer, type RunningServer } from './support/server';

let server: RunningServer;
const cookies: Record<keyof typeof people, string> = { admin: '', operator: '', observer: '' };

const page = (path: string, who: keyof typeof people) =>
	fetch(`${server.url}${path}`, { headers: { cookie: cookies[who], accept: 'text/html' }, redirect: 'manual' });

beforeAll(async () => {
	server = await startServer((await seedDataDir()).dataDir);
	for (const who of Object.keys(people) as (keyof typeof people)[])
		cookies[who] = (await signInAs(server, people[who].email, PASSWORD)).cookie;
});
afterAll(async () => {
	await server?.stop();
});

describe('page loaders', () => {
	it('refuse exactly whom the API refuses', async () => {
		expect((await page('/admin', 'operator')).status).toBe(403);
		expect((await page('/admin', 'admin')).status).toBe(200);
		expect((await page('/admin/deliveries', 'operator')).status).toBe(403);
		expect((await page('/dev/inbox', 'observer')).status).toBe(403);
		expect((await page('/setups', 'observer')).status).toBe(200);
		expect((await page('/setups/no-such-setup', 'observer')).status).toBe(404);
		expect((await page('/runs/no-such-run', 'observer')).status).toBe(404);
		expect((await page('/runs/no-such-run/replay', 'observer')).status).toBe(404);
	});
});

describe('the new-setup form', () => {
	const fields = { name: 'Fridge Test · form', description: '', order: '3', states: '6', mode_GHz: '5.1', nominal_mK: '11' };

	it('names a missing number, refuses observers and duplicates, and creates the setup', async () => {
		const blank = await postForm(server, '/setups?/createSetup', { ...fields, mode_GHz: '' }, cookies.operator);
		expect(blank.status).toBe(400);
		expect(await blank.text()).toContain('mode_GHz is required');

		const refused = await postForm(server, '/setups?/createSetup', fields, cookies.observer);
		expect(refused.status).toBe(403);

		const made = await postForm(server, '/setups?/createSetup', fields, cookies.operator);
		expect(made.status).toBe(303);
		const location = made.headers.get('location') ?? '';
		expect(location).toMatch(/^\/setups\/[\w-]+$/);

		const again = await postForm(server, '/setups?/createSetup', fields, cookies.operator);
		expect(again.status).toBe(409);
		expect(await again.text()).toContain('exists already');

		// The agent-token form on the new setup's page: the label is required, the secret shown once.
		const unlabelled = await postForm(server, `${location}?/createToken`, { label: ' ' }, cookies.operator);
		expect(unlabelled.status).toBe(400);
		expect(await unlabelled.text()).toContain('label is required');
		const token = await postForm(server, `${location}?/createToken`, { label: 'rack PC' }, cookies.operator);
		expect(token.status).toBe(200);
		expect(await token.text()).toContain('copy it now, it is not shown again');

		// The members form: a person must be chosen, and must exist.
		const nobody = await postForm(server, `${location}?/addMember`, { userId: '' }, cookies.operator);
		expect(nobody.status).toBe(400);
		expect(await nobody.text()).toContain('userId is required');
		const ghost = await postForm(server, `${location}?/addMember`, { userId: 'no-such-person' }, cookies.operator);
		expect(ghost.status).toBe(400);
		expect(await ghost.text()).toContain('no such person');
		const observer = await postForm(server, `${location}?/addMember`, { userId: 'no-such-person' }, cookies.observer);
		expect(observer.status).toBe(403);
	});
});

describe('the add-person form', () => {
	it('checks with the API’s schema, is for admins only and never sends the password back', async () => {
		const person = { email: 'form.person@lab.test', name: 'Form Person', role: 'operator', password: 'form-password-1' };
		const short = await postForm(server, '/admin?/addUser', { ...person, password: 'short' }, cookies.admin);
		expect(short.status).toBe(400);
		expect(await short.text()).toContain('password must have at least 8 characters');

		const operator = await postForm(server, '/admin?/addUser', person, cookies.operator);
		expect(operator.status).toBe(403);

		const added = await postForm(server, '/admin?/addUser', person, cookies.admin);
		expect(added.status).toBe(200);
		const html = await added.text();
		expect(html).toContain('Added Form Person.');
		expect(html).not.toContain(person.password);
		expect((await signInAs(server, person.email, person.password)).status).toBe(200);
	});
});
