// The raw ceiling of ingest, run as its own process: a bare `ws` server that JSON.parses each
// message and stores its frames with one multi-row INSERT into PGlite, acking after the commit.
// No validation, no detectors, no live bus. The database is opened with the app's openDatabase,
// so the frames table and PGlite's durability settings are the app's own.
// The INSERT is a multi-row VALUES list with positional parameters, or with `jsonb` one jsonb
// parameter unpacked by jsonb_to_recordset (the faster of the two in insert-strategies.bench.ts).
// Usage: raw-server <data dir> <migrations dir> <setup id> [values|jsonb] (bundled by children.ts);
// prints "listening <port>".
import { randomUUID } from 'node:crypto';
import { WebSocketServer } from 'ws';
import type { Frame } from '../../../src/lib/protocol/frame';
import { openDatabase } from '../../../src/lib/server/db';

const [dataDir, migrationsDir, setupId, insertKind = 'values'] = process.argv.slice(2);
if (!dataDir || !migrationsDir || !setupId) throw new Error('usage: raw-server <data dir> <migrations dir> <setup id> [values|jsonb]');
if (insertKind !== 'values' && insertKind !== 'jsonb') throw new Error(`insert kind: expected values or jsonb, got "${insertKind}"`);

const { client: pg, close } = await openDatabase(dataDir, migrationsDir);

const COLUMNS = [
	'run_id',
	'seq',
	't',
	'window_s',
	'shots',
	'vacuum',
	'counts',
	'lock',
	'switches',
	'dwell_s',
	'escapes',
	'vacuum_s',
	'transitions',
	'amp',
	'aux',
	'iq'
];

type WireFrame = Frame;

const json = (v: unknown) => (v === undefined ? null : JSON.stringify(v));

const RECORD_TYPES =
	'seq integer, t bigint, window_s float8, shots integer, vacuum integer, counts jsonb, lock float8, switches integer, dwell_s float8, escapes integer, vacuum_s float8, transitions jsonb, amp float8, aux jsonb, iq jsonb';

async function insertFrames(runId: string, frames: WireFrame[]) {
	if (insertKind === 'jsonb') {
		const rest = COLUMNS.slice(1);
		await pg.query(
			`INSERT INTO frames (${COLUMNS.join(',')}) SELECT $1, ${rest.map((c) => `x.${c}`).join(',')} FROM jsonb_to_recordset($2::jsonb) AS x(${RECORD_TYPES}) ON CONFLICT DO NOTHING`,
			[runId, JSON.stringify(frames.map((f) => ({ ...f, t: Math.round(f.t) })))]
		);
		return;
	}
	const params: unknown[] = [];
	const tuples: string[] = [];
	for (const f of frames) {
		const base = params.length;
		params.push(
			runId,
			f.seq,
			Math.round(f.t),
			f.window_s,
			f.shots,
			f.vacuum,
			json(f.counts),
			f.lock,
			f.switches,
			f.dwell_s,
			f.escapes,
			f.vacuum_s,
			json(f.transitions),
			f.amp ?? null,
			json(f.aux),
			json(f.iq)
		);
		tuples.push(`(${COLUMNS.map((_, i) => `$${base + i + 1}`).join(',')})`);
	}
	await pg.query(`INSERT INTO frames (${COLUMNS.join(',')}) VALUES ${tuples.join(',')} ON CONFLICT DO NOTHING`, params);
}

async function runFor(key: string, run: { name: string; order: number; states: number; mode_GHz: number }) {
	const found = await pg.query<{ id: string; last: number | null }>(
		'SELECT r.id, (SELECT max(seq) FROM frames f WHERE f.run_id = r.id) AS last FROM runs r WHERE r.setup_id = $1 AND r.key = $2',
		[setupId, key]
	);
	if (found.rows[0]) return { id: found.rows[0].id, lastSeq: found.rows[0].last ?? 0 };
	const id = randomUUID();
	await pg.query('INSERT INTO runs (id, setup_id, key, name, "order", states, mode_ghz) VALUES ($1, $2, $3, $4, $5, $6, $7)', [
		id,
		setupId,
		key,
		run.name,
		run.order,
		run.states,
		run.mode_GHz
	]);
	return { id, lastSeq: 0 };
}

const wss = new WebSocketServer({ port: 0, host: '127.0.0.1', maxPayload: 8 * 1024 * 1024 });
wss.on('connection', (ws) => {
	let runId: string | null = null;
	// One chain per connection keeps a run's commits in order, as the app's writer does.
	let chain: Promise<unknown> = Promise.resolve();
	ws.on('message', (data) => {
		const msg = JSON.parse(String(data));
		chain = chain
			.then(async () => {
				if (msg.type === 'hello') {
					const run = await runFor(msg.run.key, msg.run);
					runId = run.id;
					ws.send(JSON.stringify({ type: 'welcome', run: run.id, lastSeq: run.lastSeq }));
				} else if (msg.type === 'frames' && runId) {
					await insertFrames(runId, msg.frames);
					ws.send(JSON.stringify({ type: 'ack', seq: msg.frames[msg.frames.length - 1].seq }));
				}
			})
			.catch((err) => {
				console.error('raw server: message failed', err);
				ws.close(1011);
			});
	});
});
wss.on('listening', () => console.log(`listening ${(wss.address() as { port: number }).port}`));

async function stop() {
	wss.close();
	await close();
	process.exit(0);
}
process.on('SIGTERM', () => void stop());
process.on('SIGINT', () => void stop());
