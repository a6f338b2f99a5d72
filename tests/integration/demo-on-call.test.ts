// The "done when", on the demo itself (src/bin/demo.ts, its lab, rota and simulated agent,
// run faster): the lock loss wakes exactly the person on call, once per channel (push, text,
// e-mail), naming every incident it opened; unacknowledged, it reaches the secondary after the
// demo's policy; the link in the page acknowledges in one tap and paging stops.
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD, demoOnCall, demoPeople } from '../../src/bin/demo-lab';
import { DEMO_CRITICAL_ACK_MIN } from '../../src/lib/server/demo/on-call';
import { poll } from './support/poll';
import { freePort, testPgUrl } from './support/server';

const root = path.resolve(import.meta.dirname, '../..');
const MINUTE = 60_000;

type Delivery = {
	id: string;
	incidentId: string | null;
	kind: string;
	channel: string;
	recipient: string;
	status: string;
	payload: Record<string, unknown>;
};
type Fetcher = (p: string, init?: RequestInit) => Promise<Response>;

let demo: ChildProcess | null = null;
let dataDir = '';
afterAll(async () => {
	if (demo && demo.exitCode === null) {
		const gone = new Promise((r) => demo!.once('exit', r));
		demo.kill('SIGTERM');
		await gone;
	}
	if (dataDir) rmSync(dataDir, { recursive: true, force: true });
});

async function signInAs(base: string, email: string): Promise<Fetcher> {
	const res = await fetch(`${base}/api/auth/sign-in/email`, {
		method: 'POST',
		headers: { 'content-type': 'application/json', origin: base },
		body: JSON.stringify({ email, password: DEMO_PASSWORD })
	});
	if (!res.ok) throw new Error(`sign-in as ${email} failed: ${res.status}`);
	const cookie = res.headers
		.getSetCookie()
		.map((c) => c.split(';')[0])
		.join('; ');
	return (p, init = {}) =>
		fetch(`${base}${p}`, { ...init, headers: { origin: base, 'content-type': 'application/json', ...(init.headers ?? {}), cookie } });
}

// The demo always runs on its own embedded database, so the PostgreSQL pass would repeat this run
// exactly (about 50 s of CI): it runs in the embedded pass only.
describe.skipIf(testPgUrl)('the demo', () => {
	it('wakes exactly the person on call by push, text and e-mail, escalates to the secondary, and takes a one-tap acknowledge', async () => {
		const port = await freePort();
		const base = `http://127.0.0.1:${port}`;
		dataDir = path.join(mkdtempSync(path.join(os.tmpdir(), 'pw-demo-')), 'demo');
		let log = '';
		const env: NodeJS.ProcessEnv = {
			...process.env,
			PORT: String(port),
			ORIGIN: base,
			PHASEWARDEN_DEMO_DATA: dataDir,
			// Lock is lost at simulated minute 1: ten real seconds at six times the speed.
			PHASEWARDEN_DEMO_SPEED: '6',
			PHASEWARDEN_CATCHER_PORT: '0',
			PHASEWARDEN_TEST_HOOKS: '1',
			PHASEWARDEN_ESCALATION_POLL_S: '3600',
			PHASEWARDEN_REPORTS: '0'
		};
		delete env.PHASEWARDEN_DATA;
		demo = spawn(path.join(root, 'node_modules/.bin/tsx'), [path.join(root, 'src/bin/demo.ts')], {
			cwd: root,
			env,
			stdio: ['ignore', 'pipe', 'pipe']
		});
		demo.stdout!.on('data', (d) => (log += d));
		demo.stderr!.on('data', (d) => (log += d));
		await poll(
			'the demo to start',
			async () => (log.includes('Ctrl-C stops everything') ? true : demo!.exitCode !== null ? Promise.reject(new Error(log)) : null),
			120_000
		);

		const admin = await signInAs(base, demoPeople[0].email);
		const [primary, secondary] = await Promise.all(demoOnCall.map((p) => signInAs(base, p.email)));
		const idOf = async (f: Fetcher) => ((await (await f('/api/auth/get-session')).json()) as { user: { id: string } }).user.id;
		const [primaryId, secondaryId] = [await idOf(primary), await idOf(secondary)];
		const setups = ((await (await admin('/api/setups')).json()) as { setups: { id: string; name: string }[] }).setups;
		const bramble = setups.find((s) => s.name.startsWith('Fridge Bramble'))!;
		const rota = await (await primary(`/api/setups/${bramble.id}/rota`)).json();
		expect(rota.now).toEqual({ primary: primaryId, secondary: secondaryId });

		// The lock loss, then its first page: wait until it has gone out and the lock has come back
		// (simulated minute 2.5, 25 s), so any later incident of the same loss would have paged too.
		const lockLost = await poll(
			'the lock_lost incident',
			async () => {
				const list = (await (await primary(`/api/incidents?setup=${bramble.id}&pageSize=200`)).json()) as {
					incidents: { id: string; kind: string; state: string }[];
				};
				return list.incidents.find((i) => i.kind === 'lock_lost' && i.state === 'resolved') ?? null;
			},
			120_000
		);
		await new Promise((r) => setTimeout(r, 5_000));
		const deliveries = async () =>
			((await (await admin('/api/deliveries?limit=200')).json()) as { deliveries: Delivery[] }).deliveries.filter(
				(d) => d.kind === 'alert'
			);
		const firstPages = await poll('every first page sent', async () => {
			const rows = await deliveries();
			return rows.length > 0 && rows.every((d) => d.status === 'sent') ? rows : null;
		});
		const incidents = (
			(await (await primary(`/api/incidents?setup=${bramble.id}&pageSize=200`)).json()) as { incidents: { id: string; kind: string }[] }
		).incidents;
		expect(incidents.length).toBeGreaterThanOrEqual(2);
		// One page for the lot: every incident of the lock loss is in the group of the one paged.
		const heads = new Set(firstPages.map((d) => d.incidentId));
		expect(heads.size).toBe(1);
		const head = [...heads][0]!;
		const group = ((await (await primary(`/api/incidents/${head}`)).json()) as { group: { id: string }[] }).group.map((g) => g.id);
		expect(group).toContain(lockLost.id);
		expect(group.sort()).toEqual(incidents.map((i) => i.id).sort());

		// Exactly the primary, once on each channel.
		const devices = new Map<string, string>();
		for (const d of firstPages.filter((d) => d.channel === 'push')) devices.set(d.recipient, String(d.payload.userId));
		const byChannel = (rows: Delivery[], channel: string) =>
			rows.filter((d) => d.channel === channel).map((d) => (channel === 'push' ? devices.get(d.recipient) : d.recipient));
		expect(byChannel(firstPages, 'email')).toEqual([primaryId]);
		expect(byChannel(firstPages, 'push')).toEqual([primaryId]);
		expect(byChannel(firstPages, 'sms')).toEqual([primaryId]);
		expect(firstPages).toHaveLength(3);

		// What arrived: one e-mail, one push, one text, all about the lost lock and naming the group.
		// (A notice that the group cleared may follow once every incident of it has resolved; it is not a page.)
		const mail = (
			(await (await admin('/api/dev/mail')).json()) as { messages: { to: string[]; subject: string; text: string }[] }
		).messages.filter((m) => !m.subject.startsWith('[Phasewarden] Cleared'));
		expect(mail.map((m) => m.to)).toEqual([[demoOnCall[0].email]]);
		// The lock is back, but a group clears once, when its last incident resolves: at most one such notice.
		const clears = ((await (await admin('/api/dev/mail')).json()) as { messages: { subject: string }[] }).messages.filter((m) =>
			m.subject.startsWith('[Phasewarden] Cleared')
		);
		expect(clears.length).toBeLessThanOrEqual(1);
		expect(mail[0].subject).toMatch(/^\[Phasewarden\] Critical: Lock lost and \d+ related on Fridge Bramble/);
		expect(mail[0].text).toContain('In this alert');
		const texts = ((await (await admin('/api/dev/sms')).json()) as { messages: { to: string; body: string }[] }).messages;
		expect(texts.map((t) => t.to)).toEqual([demoOnCall[0].phone]);
		expect(texts[0].body).toMatch(/^Phasewarden CRITICAL: Lock lost on Fridge Bramble/);
		const pushes = (
			(await (await admin('/api/dev/push')).json()) as { messages: { payload: { title: string; actions: { url: string }[] } }[] }
		).messages.filter((m) => !m.payload.title.startsWith('Cleared'));
		expect(pushes).toHaveLength(1);
		expect(pushes[0].payload.title).toMatch(/^Critical: Lock lost/);

		// Nobody acknowledges: the demo's policy minutes on, the secondary is paged on every channel.
		const t0 = Date.now();
		const early = await (
			await admin('/api/dev/escalations/clock', {
				method: 'POST',
				body: JSON.stringify({ now_ms: t0 + (DEMO_CRITICAL_ACK_MIN - 1) * MINUTE })
			})
		).json();
		expect(early.paged).toEqual([]);
		const due = await (
			await admin('/api/dev/escalations/clock', {
				method: 'POST',
				body: JSON.stringify({ now_ms: t0 + (DEMO_CRITICAL_ACK_MIN + 1) * MINUTE })
			})
		).json();
		expect(due.paged).toEqual([{ incidentId: head, step: 1 }]);
		const escalated = await poll('the pages to the secondary', async () => {
			const rows = (await deliveries()).filter((d) => d.payload.step === 1);
			return rows.length >= 3 && rows.every((d) => d.status === 'sent') ? rows : null;
		});
		for (const d of escalated.filter((d) => d.channel === 'push')) devices.set(d.recipient, String(d.payload.userId));
		expect(byChannel(escalated, 'email')).toEqual([secondaryId]);
		expect(byChannel(escalated, 'push')).toEqual([secondaryId]);
		expect(byChannel(escalated, 'sms')).toEqual([secondaryId]);

		// The secondary taps the link in their e-mail: acknowledged, and the next step never comes.
		const theirs = await poll('the secondary’s e-mail', async () => {
			const all = ((await (await admin('/api/dev/mail')).json()) as { messages: { to: string[]; subject: string; text: string }[] })
				.messages;
			return all.find((m) => m.to.includes(demoOnCall[1].email) && !m.subject.startsWith('[Phasewarden] Cleared')) ?? null;
		});
		const link = /^Acknowledge: (\S+)$/m.exec(theirs.text)![1];
		const tap = await fetch(link.replace(/^https?:\/\/[^/]+/, base), {
			method: 'POST',
			redirect: 'manual',
			headers: { 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html', origin: base },
			body: ''
		});
		expect(tap.status).toBe(200);
		const detail = (await (await primary(`/api/incidents/${head}`)).json()) as {
			events: { action: string; actorName: string | null; note: string | null }[];
		};
		expect(detail.events).toContainEqual(
			expect.objectContaining({ action: 'acknowledged', actorName: demoOnCall[1].name, note: 'via one-tap link' })
		);
		const later = await (
			await admin('/api/dev/escalations/clock', {
				method: 'POST',
				body: JSON.stringify({ now_ms: t0 + (3 * DEMO_CRITICAL_ACK_MIN + 1) * MINUTE })
			})
		).json();
		expect(later.paged).toEqual([]);
		expect((await deliveries()).filter((d) => (d.payload.step as number) >= 2)).toEqual([]);
	}, 300_000);
});
