// The morning report of a scripted night over the real server: frames with a lock loss and a gap,
// an incident acknowledged by the operator, the report clock set through the test-only hook, the
// e-mail in the catcher, the kept report reopened, no report sent twice, a restart in between.
// Expected numbers are counted from the frames this test sends.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { RUN, frame, startAgent } from './support/agent-socket';
import { people, seedDataDir, signIn, startServer, type RunningServer, type Seeded } from './support/server';
import { poll } from './support/poll';

const ENV = { PHASEWARDEN_TEST_HOOKS: '1', PHASEWARDEN_TIME_ZONE: 'Europe/Berlin' };
const iso = (s: string) => Date.parse(s);
// The night, agent clock: frame seq s is at NIGHT + s·1 s.
const NIGHT = iso('2026-11-30T22:00:00Z');
const LAST_SEQ = 1800;
const GAP = { from: 1001, to: 1020 };
const lockOf = (seq: number) => (seq > 600 && seq <= 615 ? 0.2 : 0.93);
// 08:00 in Berlin on 1 December 2026 is 07:00 UTC (winter time, EU Directive 2000/84/EC).
const MORNING = iso('2026-12-01T07:00:00Z');

let seeded: Seeded;
let server: RunningServer;
beforeAll(async () => {
	seeded = await seedDataDir();
	server = await startServer(seeded.dataDir, undefined, ENV);
});
afterAll(async () => {
	await server?.stop();
});

type Mail = { to: string[]; subject: string; text: string; html?: string };

describe('morning report of a scripted night', () => {
	it('is made at 08:00 lab time, e-mailed, kept, and not sent twice across a restart', async () => {
		const admin = await signIn(server, 'admin');
		const tick = async (now_ms: number) => {
			const res = await admin('/api/dev/reports/clock', { method: 'POST', body: JSON.stringify({ now_ms }) });
			expect(res.status).toBe(200);
			return (await res.json()).reports as { userId: string; since_ms: number; until_ms: number; email: string; reportId: string }[];
		};
		// Schedules start the afternoon before: nothing is due yet.
		expect(await tick(iso('2026-11-30T12:00:00Z'))).toEqual([]);
		const operator = await signIn(server, 'operator');
		const observer = await signIn(server, 'observer');
		const saved = await operator('/api/reports/settings', {
			method: 'PUT',
			body: JSON.stringify({ reportTime: '08:00', followSetups: [seeded.setupId] })
		});
		expect(saved.status).toBe(200);
		expect((await saved.json()).effectiveTimeZone).toBe('Europe/Berlin');
		const bad = await operator('/api/reports/settings', { method: 'PUT', body: JSON.stringify({ reportTime: '8 am' }) });
		expect(bad.status).toBe(400);
		expect((await bad.json()).message).toMatch(/HH:MM/);
		await observer('/api/reports/settings', { method: 'PUT', body: JSON.stringify({ enabled: false, reportTime: '08:00' }) });

		// The night: lock lost for 15 windows, acknowledged by the operator, then 20 frames never sent.
		const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'night-run', name: 'Night run' });
		const runId = agent.welcome.run;
		const seqs = Array.from({ length: LAST_SEQ }, (_, i) => i + 1).filter((s) => s < GAP.from || s > GAP.to);
		// Each window's two switches go 0 → 1 and 1 → 0 (six states: K·K = 36 transition counts).
		const transitions = Array.from({ length: 36 }, (_, i) => (i === 1 || i === 6 ? 1 : 0));
		const frames = seqs.map((s) => ({ ...frame(s, lockOf(s), NIGHT), transitions }));
		const send = async (list: typeof frames) => {
			for (let i = 0; i < list.length; i += 100) agent.send({ type: 'frames', frames: list.slice(i, i + 100) });
			await agent.waitFor((m) => m.type === 'ack' && m.seq === list.at(-1)!.seq, 30_000);
		};
		await send(frames.filter((f) => f.seq <= 615));
		const incident = await poll('the lock-lost incident', async () => {
			const body = await (await operator(`/api/incidents?run=${runId}&state=open`)).json();
			return body.incidents[0];
		});
		expect((await operator(`/api/incidents/${incident.id}/ack`, { method: 'POST', body: '{}' })).status).toBe(200);
		await send(frames.filter((f) => f.seq > 615));
		await agent.close();

		// Before 08:00 nothing; at 08:00 the report of the 24 h before.
		expect(await tick(MORNING - 60_000)).toEqual([]);
		const made = await tick(MORNING);
		// The operator's and the admin's; the observer turned reports off.
		expect(made).toHaveLength(2);
		expect(made.every((r) => r.since_ms === MORNING - 86_400_000 && r.until_ms === MORNING && r.email === 'sent')).toBe(true);
		const listed = await operator('/reports');
		expect(listed.status).toBe(200);
		const listText = await listed.text();
		const mine = made.find((r) => listText.includes(`/reports/${r.reportId}`));
		expect(made.filter((r) => listText.includes(`/reports/${r.reportId}`))).toHaveLength(1);
		const me = await (await operator('/api/reports/settings')).json();
		expect(me.lastReportUntil_ms).toBe(MORNING);
		const observerSettings = await (await observer('/api/reports/settings')).json();
		expect(observerSettings.lastReportUntil_ms).toBeNull();

		const mail = await poll('the report e-mail', async () => {
			const body = (await (await operator('/api/dev/mail')).json()) as { messages: Mail[] };
			return body.messages.find((m) => m.to.includes(people.operator.email) && m.subject.startsWith('Morning report'));
		});
		expect(mail.subject).toContain('1 run, 1 incident');
		expect(mail.text).toContain('Night run');
		expect(mail.text).toContain('Lock lost');
		expect(mail.text).toContain(`Acknowledged by ${people.operator.name}`);
		expect(mail.text).toContain(`Lost data: 20 s (${GAP.to - GAP.from + 1} frames never arrived)`);
		expect(mail.text).toContain(`/runs/${runId}/timeline?from_ms=${MORNING - 86_400_000}&to_ms=${MORNING}`);
		expect(mail.text).toContain('2026-11-30 08:00 to 2026-12-01 08:00 (Europe/Berlin)');
		expect(mail.html).toContain('<svg');
		expect(mail.text).not.toMatch(/toAcknowledge_s|expected_rate|lockMin/);
		const allMail = (await (await operator('/api/dev/mail')).json()) as { messages: Mail[] };
		expect(allMail.messages.some((m) => m.to.includes(people.observer.email) && m.subject.startsWith('Morning report'))).toBe(false);

		// The same span as JSON: sums as sent.
		const json = await (await operator(`/api/reports/morning?since_ms=${MORNING - 86_400_000}&until_ms=${MORNING}`)).json();
		expect(json.runs).toHaveLength(1);
		const s = json.runs[0].summary;
		expect(s.exposure.frames).toBe(frames.length);
		expect(s.switching.count).toBe(frames.reduce((n, f) => n + f.switches, 0));
		expect(s.exposure.dwell_s).toBeCloseTo(
			frames.reduce((n, f) => n + f.dwell_s, 0),
			6
		);
		expect(s.lost.frames).toBe(20);
		expect(s.timeLocked.locked_s_min).toBe(frames.filter((f) => f.lock >= 0.5).length);
		expect(s.timeLocked.locked_s_max).toBe(s.timeLocked.locked_s_min);
		expect(s.transitions.counts[0][1]).toBe(frames.length);
		expect(s.transitions.counts[1][0]).toBe(frames.length);
		expect(s.occupancy.test.method).toBe('observed transitions');
		expect(json.incidents).toHaveLength(1);
		expect(json.incidents[0]).toMatchObject({ kind: 'lock_lost', acknowledgedBy: people.operator.name });
		expect(json.incidents[0].toAcknowledge_s).toBeGreaterThanOrEqual(0);
		expect((await operator('/api/reports/morning?since_ms=5&until_ms=4')).status).toBe(400);

		// The run summary of the hour around the lock loss only.
		const hour = await (await observer(`/api/runs/${runId}/summary?from_ms=${NIGHT + 500_000}&to_ms=${NIGHT + 700_000}`)).json();
		expect(hour.exposure.frames).toBe(frames.filter((f) => f.t >= NIGHT + 500_000 && f.t < NIGHT + 700_000).length);
		expect(hour.incidents).toHaveLength(1);
		expect((await observer(`/api/runs/${runId}/summary?from_ms=9&to_ms=3`)).status).toBe(400);
		expect((await observer(`/api/runs/no-such-run/summary`)).status).toBe(404);
		const summaryPage = await observer(`/runs/${runId}/summary`);
		expect(summaryPage.status).toBe(200);
		const summaryHtml = await summaryPage.text();
		expect(summaryHtml).toContain('Summary of Night run');
		expect(summaryHtml).toContain('From state 0 (0°) to state 1 (60°)');
		expect((await operator('/settings')).status).toBe(200);

		// Kept: reopened as a page, only by its owner.
		const page = await operator(`/reports/${mine!.reportId}`);
		expect(page.status).toBe(200);
		expect(await page.text()).toContain('Night run');
		expect((await observer(`/reports/${mine!.reportId}`)).status).toBe(404);

		// Not twice for one morning, also after a restart; the next morning starts where this one ended.
		await server.stop();
		server = await startServer(seeded.dataDir, undefined, ENV);
		const admin2 = await signIn(server, 'admin');
		const tick2 = async (now_ms: number) =>
			(await (await admin2('/api/dev/reports/clock', { method: 'POST', body: JSON.stringify({ now_ms }) })).json()).reports as {
				since_ms: number;
				until_ms: number;
			}[];
		expect(await tick2(MORNING + 3_600_000)).toEqual([]);
		const next = await tick2(MORNING + 86_400_000);
		expect(next.length).toBeGreaterThan(0);
		expect(next.every((r) => r.since_ms === MORNING && r.until_ms === MORNING + 86_400_000)).toBe(true);
	}, 120_000);
});
