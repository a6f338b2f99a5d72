// Ways to insert a batch of frames into PGlite's frames table, at 1 frame (live) and 500 frames
// (bulk) per statement, each as a ratio to the fastest of its batch size in the same run:
//  - drizzle's query builder, .values(rows), as the writer does today;
//  - one jsonb parameter unpacked by jsonb_to_recordset;
//  - a multi-row INSERT whose text is built once per batch size and cached (positional parameters);
//  - drizzle's .prepare() over sql.placeholder values, built once per batch size;
//  - and, for reference, the app's own single-statement batch (src/lib/server/ingest/batch-write.ts).
// Every strategy starts from wire frames, so converting them is part of its cost.
// Run: npx tsx tests/bench/insert-strategies.bench.ts. Nothing here is asserted.
import { performance } from 'node:perf_hooks';
import type { PGlite } from '@electric-sql/pglite';
import { sql } from 'drizzle-orm';
import { openDatabase, type Db } from '../../src/lib/server/db';
import { frames as framesTable } from '../../src/lib/server/db/schema';
import { writeBatch } from '../../src/lib/server/ingest/batch-write';
import { frameToRow } from '../../src/lib/server/ingest/frame-rows';
import type { Frame } from '../../src/lib/protocol/frame';
import { sizeFromEnv } from './support/env';
import { benchFrame } from './support/frames';
import { copySeed, migrationsDir, seedTemplate } from './support/seed';
import { median } from './support/stats';

/** Rounds per batch size; in each round every strategy inserts one batch, in rotating order. */
const ROUNDS_BULK = sizeFromEnv('BENCH_INSERT_ROUNDS_BULK', 60);
const ROUNDS_LIVE = sizeFromEnv('BENCH_INSERT_ROUNDS_LIVE', 600);
const T0_MS = Date.UTC(2026, 0, 1);

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
] as const;
const RECORD_TYPES =
	'run_id text, seq integer, t bigint, window_s float8, shots integer, vacuum integer, counts jsonb, lock float8, switches integer, dwell_s float8, escapes integer, vacuum_s float8, transitions jsonb, amp float8, aux jsonb, iq jsonb';
const json = (v: unknown) => (v === undefined ? null : JSON.stringify(v));

type Insert = (runId: string, batch: Frame[]) => Promise<unknown>;

function strategies(db: Db, pg: PGlite): Record<string, Insert> {
	const textCache = new Map<number, string>();
	const preparedCache = new Map<number, { execute(values: Record<string, unknown>): Promise<unknown> }>();
	const FIELDS = [
		'runId',
		'seq',
		't',
		'windowS',
		'shots',
		'vacuum',
		'counts',
		'lock',
		'switches',
		'dwellS',
		'escapes',
		'vacuumS',
		'transitions',
		'amp',
		'aux',
		'iq'
	] as const;
	return {
		'drizzle .values(rows)': (runId, batch) =>
			db
				.insert(framesTable)
				.values(batch.map((f) => frameToRow(runId, f)))
				.onConflictDoNothing(),
		'jsonb_to_recordset($1::jsonb)': (runId, batch) => {
			const records = batch.map((f) => ({
				run_id: runId,
				seq: f.seq,
				t: Math.round(f.t),
				window_s: f.window_s,
				shots: f.shots,
				vacuum: f.vacuum,
				counts: f.counts,
				lock: f.lock,
				switches: f.switches,
				dwell_s: f.dwell_s,
				escapes: f.escapes,
				vacuum_s: f.vacuum_s,
				transitions: f.transitions ?? null,
				amp: f.amp ?? null,
				aux: f.aux ?? null,
				iq: f.iq ?? null
			}));
			return pg.query(
				`INSERT INTO frames (${COLUMNS.join(',')}) SELECT ${COLUMNS.join(',')} FROM jsonb_to_recordset($1::jsonb) AS x(${RECORD_TYPES}) ON CONFLICT DO NOTHING`,
				[JSON.stringify(records)]
			);
		},
		'cached multi-row text, $n parameters': (runId, batch) => {
			let text = textCache.get(batch.length);
			if (!text) {
				const tuples = batch.map((_, r) => `(${COLUMNS.map((__, c) => `$${r * COLUMNS.length + c + 1}`).join(',')})`);
				text = `INSERT INTO frames (${COLUMNS.join(',')}) VALUES ${tuples.join(',')} ON CONFLICT DO NOTHING`;
				textCache.set(batch.length, text);
			}
			const params: unknown[] = [];
			for (const f of batch)
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
			return pg.query(text, params);
		},
		'drizzle .prepare() with placeholders': (runId, batch) => {
			let prepared = preparedCache.get(batch.length);
			if (!prepared) {
				const rows = batch.map((_, r) => Object.fromEntries(FIELDS.map((k) => [k, sql.placeholder(`${k}${r}`)])));
				prepared = db
					.insert(framesTable)
					.values(rows as never)
					.onConflictDoNothing()
					.prepare(`frames_${batch.length}`);
				preparedCache.set(batch.length, prepared);
			}
			const values: Record<string, unknown> = {};
			batch.forEach((f, r) => {
				const row = frameToRow(runId, f) as Record<string, unknown>;
				for (const k of FIELDS) values[`${k}${r}`] = row[k] ?? null;
			});
			return prepared.execute(values);
		},
		// The app's statement: frames and rollups in one (batch-write.ts); the run's progress goes along every few seconds.
		'app writeBatch (batch-write.ts)': (runId, batch) =>
			writeBatch(
				db,
				runId,
				new Date(),
				batch.map((frame) => ({ frame, late: false })),
				[],
				null
			)
	};
}

async function main() {
	console.log(
		`insert strategies: ${ROUNDS_BULK} rounds of 500-frame statements, ${ROUNDS_LIVE} rounds of 1-frame statements; strategies in rotating order within each round; autocommit, PGlite as openDatabase opens it`
	);
	const template = await seedTemplate();
	const seed = copySeed(template, 'insert');
	const { db, client: pg, close } = await openDatabase(seed.dataDir, migrationsDir);
	try {
		const all = strategies(db, pg);
		const names = Object.keys(all);
		const runIds = new Map<string, string>();
		const nextSeq = new Map<string, number>();
		for (const [i, name] of names.entries()) {
			const id = `insert-bench-${i}`;
			await pg.query('INSERT INTO runs (id, setup_id, key, name, "order", states, mode_ghz) VALUES ($1, $2, $3, $4, 3, 6, 5)', [
				id,
				seed.setupId,
				id,
				name
			]);
			runIds.set(name, id);
			nextSeq.set(name, 0);
		}
		/** ms one batch of `batchSize` fresh frames takes with `name`. */
		const once = async (name: string, batchSize: number) => {
			let seq = nextSeq.get(name)!;
			const batch = Array.from({ length: batchSize }, () => (seq++, benchFrame(seq, T0_MS + seq * 1000)) as Frame);
			nextSeq.set(name, seq);
			const t0 = performance.now();
			await all[name](runIds.get(name)!, batch);
			return performance.now() - t0;
		};
		for (const [batchSize, rounds] of [
			[500, ROUNDS_BULK],
			[1, ROUNDS_LIVE]
		] as const) {
			for (const name of names) for (let w = 0; w < 3; w++) await once(name, batchSize); // warm-up
			// Statement by statement in rotation, so every strategy meets the same disk and machine load.
			const times = new Map<string, number[]>(names.map((n) => [n, []]));
			for (let r = 0; r < rounds; r++) {
				for (let i = 0; i < names.length; i++) {
					const name = names[(i + r) % names.length];
					times.get(name)!.push(await once(name, batchSize));
				}
			}
			const rates = names.map((n) => ({ name: n, rate: batchSize / (median(times.get(n)!) / 1000) }));
			const best = Math.max(...rates.map((m) => m.rate));
			console.log(
				`### Frame INSERT strategies, ${batchSize} frame${batchSize > 1 ? 's' : ''} per statement (median of ${rounds} statements each)\n`
			);
			console.log('| strategy | frames/s | ratio to the fastest |\n| --- | ---: | ---: |');
			for (const m of rates) console.log(`| ${m.name} | ${Math.round(m.rate).toLocaleString('en-US')} | ${(m.rate / best).toFixed(2)} |`);
			console.log('');
		}
	} finally {
		await close();
	}
}

main().catch((e) => {
	console.error(e);
	process.exit(1);
});
