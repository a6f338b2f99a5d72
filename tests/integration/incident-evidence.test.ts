// The incident page draws its evidence over the real server: after a lock loss the page holds the
// lock chart (values and the threshold line) and the phase-space picture with one lobe per state,
// tells the evidence in sentences, and shows no raw JSON or field names. The IQ API sums exactly
// the histograms the agent sent.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { RUN, frame, startAgent } from './support/agent-socket';
import { seedDataDir, signIn, startServer, type RunningServer, type Seeded } from './support/server';
import { poll } from './support/poll';

let seeded: Seeded;
let server: RunningServer;

beforeAll(async () => {
	seeded = await seedDataDir();
	server = await startServer(seeded.dataDir);
});
afterAll(async () => {
	await server?.stop();
});

// A 4×4 histogram per frame: the count in bin b is seq + b, so the sum over frames is known by hand.
const BINS = 4;
const iqOf = (seq: number) => ({ bins: BINS, extent: 3, counts: Array.from({ length: BINS * BINS }, (_, b) => seq + b) });

/** The page as a person sees it: scripts (the hydration data) and tags removed. */
const visibleText = (html: string) =>
	html
		.replace(/<script[\s\S]*?<\/script>/g, ' ')
		.replace(/<style[\s\S]*?<\/style>/g, ' ')
		.replace(/<title>[\s\S]*?<\/title>/g, ' ')
		.replace(/<[^>]+>/g, ' ')
		.replace(/&[a-z]+;|&#\d+;/g, ' ')
		.replace(/\s+/g, ' ');

describe('incident evidence drawn', () => {
	it('lock loss: chart, phase space, sentences and no raw JSON on the page; the IQ API sums the histograms', async () => {
		const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'evidence-run' });
		const lockOf = (seq: number) => (seq > 10 && seq <= 22 ? 0.15 : 0.93);
		const all = Array.from({ length: 32 }, (_, i) => ({ ...frame(i + 1, lockOf(i + 1)), iq: iqOf(i + 1) }));
		for (let i = 0; i < all.length; i += 4) agent.send({ type: 'frames', frames: all.slice(i, i + 4) });
		await agent.waitFor((m) => m.type === 'ack' && m.seq === 32);
		const runId = agent.welcome.run;

		const observer = await signIn(server, 'observer');
		const incident = await poll('the lock_lost incident', async () => {
			const body = await (await observer(`/api/incidents?run=${runId}`)).json();
			return body.incidents.find((i: { kind: string }) => i.kind === 'lock_lost');
		});

		const res = await observer(`/incidents/${incident.id}`, { headers: { accept: 'text/html' } });
		expect(res.status).toBe(200);
		const html = await res.text();
		const level = html.slice(html.indexOf('data-chart="level"'));
		expect(html).toContain('data-chart="level"');
		expect(level.slice(0, level.indexOf('</svg>')).match(/data-part="limit"/g)?.length).toBeGreaterThanOrEqual(1);
		expect(level).toContain('data-part="value"');
		expect(html).toMatch(/role="img" aria-label="Lock quality in \d+ windows/);
		// the phase space over the evidence's windows, one ringed lobe per state
		const phase = html.slice(html.indexOf('data-chart="phase-space"'));
		expect(html).toContain('data-chart="phase-space"');
		expect(phase.slice(0, phase.indexOf('</svg>')).match(/data-part="lobe"/g)).toHaveLength(RUN.states);

		const text = visibleText(html);
		expect(text).toContain('Phase lock fell below 0.5 for 5 windows in a row');
		expect(text).not.toMatch(/[{}]|"\w+":/);
		expect(text).not.toMatch(/\b(clearThreshold|skippedWindows|t_ms|lock_lost|windowsOpen)\b/);

		const iq = await (await observer(`/api/runs/${runId}/iq?from_ms=${all[0].t - 1000}&to_ms=${all.at(-1)!.t}`)).json();
		expect(iq.sum.frames).toBe(32);
		expect(iq.sampledEvery).toBe(1);
		// Σ_{seq=1..32} (seq + b) = 528 + 32·b
		expect(iq.sum.counts).toEqual(Array.from({ length: BINS * BINS }, (_, b) => 528 + 32 * b));
		expect(iq.lobes).toHaveLength(RUN.states);
		expect((await observer(`/api/runs/${runId}/iq?from_ms=5&to_ms=1`)).status).toBe(400);

		const runPage = await (await observer(`/runs/${runId}?iq_span=all`, { headers: { accept: 'text/html' } })).text();
		expect(runPage).toContain('data-chart="phase-space"');
		await agent.close();
	});
});
