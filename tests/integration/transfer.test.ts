// Export and import over the real server: row counts against what was stored, a round trip
// export → import that keeps every wire field, refusals that name their lines and store nothing,
// gap filling, and who may import.
import { readdirSync } from 'node:fs';
import path from 'node:path';
import { csvParse } from 'd3-dsv';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { RUN, frame, startAgent, type TestAgent } from './support/agent-socket';
import { seedDataDir, signIn, startServer, type RunningServer, type Seeded } from './support/server';

let seeded: Seeded;
let server: RunningServer;
let agent: TestAgent;
let runId: string;
type Fetcher = Awaited<ReturnType<typeof signIn>>;
let operator: Fetcher;
let observer: Fetcher;

const T0 = 1_796_000_000_000;
/** Small enough to pass in a test, large enough for the round trip's file (about 0.5 MB). */
const UPLOAD_LIMIT_BYTES = 3 * 1024 * 1024;
/** A window with every optional field on some frames, so the round trip covers them all. */
function richFrame(seq: number) {
	const f: Record<string, unknown> = { ...frame(seq, 0.9 + (seq % 7) / 100), aux: { mxc_mK: 12 + (seq % 10) / 10, pump_dBm: -23.5 } };
	if (seq % 3 === 0) f.transitions = Array.from({ length: 36 }, (_, i) => (i === 1 ? 1 : i === 8 ? 1 : 0));
	if (seq % 5 === 0) f.amp = 3.25;
	if (seq % 4 === 0) f.iq = { bins: 4, extent: 2.5, counts: Array.from({ length: 16 }, (_, i) => (i * seq) % 17) };
	return f;
}
// Seqs 1–300 and 401–1200 streamed; 301–400 lost on the way.
const SENT = [...Array.from({ length: 300 }, (_, i) => i + 1), ...Array.from({ length: 800 }, (_, i) => i + 401)];

/** The multipart body of an import form, encoded once so the signed-in fetcher can send it with its boundary. */
async function importForm(text: string, runKey?: string) {
	const form = new FormData();
	form.set('file', new Blob([text], { type: 'application/x-ndjson' }), 'night.ndjson');
	if (runKey) form.set('runKey', runKey);
	const encoded = new Request('http://encode.invalid/', { method: 'POST', body: form });
	return { body: new Uint8Array(await encoded.arrayBuffer()), contentType: encoded.headers.get('content-type')! };
}

async function postImport(fetcher: Fetcher, text: string, runKey?: string, query = '') {
	const { body, contentType } = await importForm(text, runKey);
	return fetcher(`/api/setups/${seeded.setupId}/import${query}`, { method: 'POST', body, headers: { 'content-type': contentType } });
}

/** The same upload sent chunked, with no Content-Length, as a streaming client would. */
async function postImportChunked(fetcher: Fetcher, text: string, runKey: string) {
	const { body, contentType } = await importForm(text, runKey);
	let offset = 0;
	const stream = new ReadableStream<Uint8Array>({
		pull(controller) {
			if (offset >= body.length) return controller.close();
			controller.enqueue(body.slice(offset, (offset += 64 * 1024)));
		}
	});
	return fetcher(`/api/setups/${seeded.setupId}/import`, {
		method: 'POST',
		body: stream,
		headers: { 'content-type': contentType },
		duplex: 'half'
	} as RequestInit);
}

const lines = (text: string) => text.split('\n').filter((l) => l !== '');

/** Frames and switches summed over a run's 10 s rollups: the timeline's view of the run. */
async function rollupTotals(id: string) {
	const body = await (await observer(`/api/runs/${id}/rollups?resolution=10`)).json();
	const rows = body.rollups as { frames: number; switches: number }[];
	return { frames: rows.reduce((a, r) => a + r.frames, 0), switches: rows.reduce((a, r) => a + r.switches, 0) };
}

beforeAll(async () => {
	seeded = await seedDataDir();
	server = await startServer(seeded.dataDir, undefined, { PHASEWARDEN_UPLOAD_LIMIT: `${UPLOAD_LIMIT_BYTES}` });
	agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'transfer-src' });
	runId = agent.welcome.run;
	for (let i = 0; i < SENT.length; i += 250) agent.send({ type: 'frames', frames: SENT.slice(i, i + 250).map(richFrame) });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === 1200, 30_000);
	operator = await signIn(server, 'operator');
	observer = await signIn(server, 'observer');
}, 60_000);
afterAll(async () => {
	await agent?.close();
	await server?.stop();
});

describe('export', () => {
	it('gives one CSV row per stored frame, counts and aux flattened to columns', async () => {
		const res = await observer(`/api/runs/${runId}/export.csv`);
		expect(res.status).toBe(200);
		expect(res.headers.get('content-disposition')).toBe('attachment; filename="transfer-src.csv"');
		expect(res.headers.get('x-phasewarden-frames')).toBe(String(SENT.length));
		const rows = csvParse(await res.text());
		expect(rows.length).toBe(SENT.length);
		expect(rows.columns).toEqual(
			expect.arrayContaining(['count_0', 'count_5', 'transition_0_1', 'transition_5_5', 'aux_mxc_mK', 'aux_pump_dBm'])
		);
		expect(rows.columns).not.toContain('count_6');
		expect(rows.map((r) => Number(r.seq))).toEqual(SENT);
		const row9 = rows.find((r) => r.seq === '9')!;
		const sent9 = richFrame(9) as ReturnType<typeof frame> & { transitions: number[] };
		expect(Number(row9.t_ms)).toBe(sent9.t);
		expect([0, 1, 2, 3, 4, 5].map((i) => Number(row9[`count_${i}`]))).toEqual(sent9.counts);
		expect(Number(row9.transition_0_1)).toBe(1);
		expect(Number(row9.aux_mxc_mK)).toBe(12.9);
		expect(rows.find((r) => r.seq === '10')!.transition_0_1).toBe('');
	});

	it('limits CSV and NDJSON to the span [from_ms, to_ms) of agent time', async () => {
		const from_ms = T0 + 250 * 1000;
		const to_ms = T0 + 450 * 1000;
		const inSpan = SENT.filter((s) => T0 + s * 1000 >= from_ms && T0 + s * 1000 < to_ms);
		const csv = await observer(`/api/runs/${runId}/export.csv?from_ms=${from_ms}&to_ms=${to_ms}`);
		expect(csv.headers.get('x-phasewarden-frames')).toBe(String(inSpan.length));
		expect(csvParse(await csv.text()).map((r) => Number(r.seq))).toEqual(inSpan);
		const nd = await observer(`/api/runs/${runId}/export.ndjson?from_ms=${from_ms}&to_ms=${to_ms}`);
		expect(lines(await nd.text()).map((l) => JSON.parse(l).seq)).toEqual(inSpan);
		expect((await observer(`/api/runs/${runId}/export.csv?from_ms=${to_ms}&to_ms=${from_ms}`)).status).toBe(400);
	});

	it('exports incidents as CSV with the list filters', async () => {
		const listed = await (await observer(`/api/incidents?setup=${seeded.setupId}&pageSize=200`)).json();
		const res = await observer(`/api/incidents/export.csv?setup=${seeded.setupId}`);
		expect(res.status).toBe(200);
		const rows = csvParse(await res.text());
		expect(rows.columns.slice(0, 3)).toEqual(['id', 'setup', 'run_id']);
		expect(rows.length).toBe(listed.total);
		expect((await observer('/api/incidents/export.csv?state=nonsense')).status).toBe(400);
	});
});

describe('import', () => {
	it('round-trips: NDJSON export imported into a new run gives identical frames and the same gap', async () => {
		const exported = await (await observer(`/api/runs/${runId}/export.ndjson`)).text();
		expect(lines(exported).length).toBe(SENT.length);
		const res = await postImport(operator, exported);
		expect(res.status).toBe(200);
		const outcome = await res.json();
		expect(outcome).toMatchObject({ created: true, frames: SENT.length, stored: SENT.length, duplicates: 0, gapsAfter: 1 });
		const again = await (await observer(`/api/runs/${outcome.runId}/export.ndjson`)).text();
		expect(lines(again).map((l) => JSON.parse(l))).toEqual(lines(exported).map((l) => JSON.parse(l)));
		expect(lines(exported).map((l) => JSON.parse(l))).toEqual(SENT.map(richFrame));
		const detail = await (await observer(`/api/runs/${outcome.runId}`)).json();
		expect(detail.gaps.map((g: { fromSeq: number; toSeq: number }) => [g.fromSeq, g.toSeq])).toEqual([[301, 400]]);
		expect(detail.run).toMatchObject({ frameCount: SENT.length, status: 'ended', lastSeq: 1200 });
		expect(await rollupTotals(outcome.runId)).toEqual(await rollupTotals(runId));
	});

	it('refuses a malformed file naming every bad line, and stores nothing', async () => {
		const before = await (await observer(`/api/runs?setup=${seeded.setupId}`)).json();
		const good = (s: number) => JSON.stringify(frame(s));
		const text = [
			good(1),
			'{"seq": 2, "t": ',
			good(3),
			JSON.stringify({ ...frame(4), counts: [1, 2, 3] }),
			JSON.stringify({ ...frame(5), shots: -1 }),
			good(2),
			'',
			JSON.stringify({ ...frame(8), aux: { 'bad name': 1 } })
		].join('\n');
		const res = await postImport(operator, text);
		expect(res.status).toBe(400);
		const body = await res.json();
		expect(body.message).toMatch(/5 lines .*nothing was stored/);
		expect(body.lines.map((l: { line: number }) => l.line)).toEqual([2, 4, 5, 6, 8]);
		expect(body.lines[0].message).toMatch(/not valid JSON/);
		expect(body.lines[1].message).toMatch(/^counts: expected 6 entries/);
		expect(body.lines[2].message).toMatch(/^shots:/);
		expect(body.lines[3].message).toMatch(/seq 2 does not come after seq 3 \(line 3\)/);
		expect(body.lines[4].message).toMatch(/^aux/);
		const after = await (await observer(`/api/runs?setup=${seeded.setupId}`)).json();
		expect(after.runs.length).toBe(before.runs.length);
	});

	it('fills a gap of an open run, skips seqs already stored, and refuses seqs its agent will send', async () => {
		const text = [299, 300, ...Array.from({ length: 50 }, (_, i) => 301 + i)].map((s) => JSON.stringify(richFrame(s))).join('\n') + '\n';
		const res = await postImport(operator, text, 'transfer-src');
		expect(res.status).toBe(200);
		const outcome = await res.json();
		expect(outcome).toMatchObject({
			runId,
			created: false,
			stored: 50,
			filledGaps: 50,
			duplicates: 2,
			duplicateRanges: [[299, 300]],
			gapsBefore: 1,
			gapsAfter: 1
		});
		const detail = await (await observer(`/api/runs/${runId}`)).json();
		expect(detail.gaps.map((g: { fromSeq: number; toSeq: number }) => [g.fromSeq, g.toSeq])).toEqual([[351, 400]]);
		expect(detail.run.frameCount).toBe(SENT.length + 50);
		// The rollups take the filled frames in: 2 switches each (support/agent-socket.ts frame()).
		expect(await rollupTotals(runId)).toEqual({ frames: SENT.length + 50, switches: 2 * (SENT.length + 50) });
		const csv = csvParse(await (await observer(`/api/runs/${runId}/export.csv`)).text());
		expect(csv.length).toBe(SENT.length + 50);
		expect(csv.filter((r) => r.late === 'true').map((r) => Number(r.seq))).toEqual(Array.from({ length: 50 }, (_, i) => 301 + i));

		const ahead = await postImport(operator, JSON.stringify(richFrame(1201)), 'transfer-src');
		expect(ahead.status).toBe(400);
		expect((await ahead.json()).lines).toEqual([
			{ line: 1, message: expect.stringMatching(/seq 1201 is above 1200: run "transfer-src" is still open/) }
		]);
	});

	it('with ?progress=1 streams the checking and storing phases, then the outcome or the refusal', async () => {
		const text = Array.from({ length: 1200 }, (_, i) => JSON.stringify(frame(i + 1))).join('\n');
		const res = await postImport(operator, text, 'transfer-progress', '?progress=1');
		expect(res.status).toBe(200);
		const events = lines(await res.text()).map((l) => JSON.parse(l));
		expect(events[0]).toEqual({ phase: 'checking' });
		expect(events.filter((e) => e.phase === 'storing').map((e) => e.done)).toEqual([0, 500, 1000, 1200]);
		expect(events.at(-1).outcome).toMatchObject({ runKey: 'transfer-progress', created: true, stored: 1200 });

		const bad = await postImport(operator, 'nope', undefined, '?progress=1');
		const last = lines(await bad.text())
			.map((l) => JSON.parse(l))
			.at(-1);
		expect(last.refused).toMatchObject({ status: 400, lines: [{ line: 1, message: expect.stringMatching(/not valid JSON/) }] });
	});

	it('lets operators import and refuses observers (403) and strangers (401)', async () => {
		const one = JSON.stringify(frame(1));
		expect((await postImport(observer, one)).status).toBe(403);
		const anonymous = await fetch(`${server.url}/api/setups/${seeded.setupId}/import`, { method: 'POST', headers: { origin: server.url } });
		expect(anonymous.status).toBe(401);
		expect((await postImport(operator, '')).status).toBe(400);
	});

	it('takes a chunked upload, and refuses one that runs past the upload limit with 413, storing nothing', async () => {
		const runs = async () => ((await (await observer(`/api/runs?setup=${seeded.setupId}`)).json()).runs as unknown[]).length;
		const small = Array.from({ length: 20 }, (_, i) => JSON.stringify(frame(i + 1))).join('\n');
		const taken = await postImportChunked(operator, small, 'chunked-small');
		expect(taken.status).toBe(200);
		expect(await taken.json()).toMatchObject({ created: true, stored: 20 });

		const before = await runs();
		// The 413 comes while the file is still arriving, before any line is checked.
		const line = JSON.stringify(richFrame(4));
		const big = Array.from({ length: Math.ceil((UPLOAD_LIMIT_BYTES * 1.5) / line.length) }, () => line).join('\n');
		const refused = await postImportChunked(operator, big, 'chunked-big');
		expect(refused.status).toBe(413);
		expect((await refused.json()).message).toMatch(
			new RegExp(`request body too large: the upload ran past it; the limit is ${UPLOAD_LIMIT_BYTES} bytes`)
		);
		expect(await runs()).toBe(before);
	});

	it('names a missing file field, and leaves no spooled upload in the data folder', async () => {
		const form = new FormData();
		form.set('runKey', 'no-file');
		const encoded = new Request('http://encode.invalid/', { method: 'POST', body: form });
		const res = await operator(`/api/setups/${seeded.setupId}/import`, {
			method: 'POST',
			body: await encoded.arrayBuffer(),
			headers: { 'content-type': encoded.headers.get('content-type')! }
		});
		expect(res.status).toBe(400);
		expect((await res.json()).message).toMatch(/field "file" is missing/);
		// Every import above (stored, refused or failed) spooled its file here and must have removed it.
		expect(readdirSync(path.join(seeded.dataDir, 'uploads'))).toEqual([]);
	});
});
