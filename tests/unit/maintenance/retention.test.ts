// Raw-frame retention against a real PGlite in memory: frames past a setup's retention go, while
// rollups, frames after an open run's last detector snapshot, and setups without retention stay.
import { randomUUID } from 'node:crypto';
import { and, eq } from 'drizzle-orm';
import { afterAll, beforeAll, expect, it, vi } from 'vitest';
import { openDatabase, type Db } from '../../../src/lib/server/db';
import { frameRollups, frames, runSnapshots, runs, setups } from '../../../src/lib/server/db/schema';
import { frameToRow } from '../../../src/lib/server/ingest/frame-rows';
import { applyRetention } from '../../../src/lib/server/maintenance/retention';
import { runMaintenance } from '../../../src/lib/server/maintenance/schedule';

vi.setConfig({ testTimeout: 120_000 });

let db: Db;
let close: () => Promise<void>;
beforeAll(async () => {
	({ db, close } = await openDatabase('memory://', 'drizzle'));
}, 120_000);
afterAll(async () => {
	await close();
});

const DAY = 86_400_000;
const NOW = new Date('2026-11-20T12:00:00Z');

async function runWith(opts: { retentionDays: number | null; status: 'open' | 'ended'; frames: number; snapshotSeq?: number }) {
	const setupId = randomUUID();
	await db.insert(setups).values({
		id: setupId,
		name: `fridge ${setupId}`,
		order: 2,
		states: 2,
		modeGHz: 5,
		nominalMK: 12,
		rawRetentionDays: opts.retentionDays
	});
	const runId = randomUUID();
	await db
		.insert(runs)
		.values({ id: runId, setupId, key: 'k', name: 'n', order: 2, states: 2, modeGHz: 5, status: opts.status, lastSeq: opts.frames });
	// Frame seq s arrived (frames − s + 1) hours before NOW: seq 1 is the oldest.
	const rows = Array.from({ length: opts.frames }, (_, i) => {
		const seq = i + 1;
		const receivedAt = new Date(NOW.getTime() - (opts.frames - seq + 1) * 3_600_000);
		const f = {
			seq,
			t: receivedAt.getTime(),
			window_s: 1,
			shots: 10,
			vacuum: 0,
			counts: [5, 5],
			lock: 0.9,
			switches: 0,
			dwell_s: 1,
			escapes: 0,
			vacuum_s: 0
		};
		return { ...frameToRow(runId, f), receivedAt };
	});
	await db.insert(frames).values(rows);
	await db.insert(frameRollups).values({
		runId,
		resolutionS: 3600,
		bucketT: 0,
		frames: opts.frames,
		firstSeq: 1,
		lastSeq: opts.frames,
		windowS: opts.frames,
		shots: 10 * opts.frames,
		vacuum: 0,
		counts: [5 * opts.frames, 5 * opts.frames],
		switches: 0,
		dwellS: opts.frames,
		escapes: 0,
		vacuumS: 0,
		transitions: null,
		lockMin: 0.9,
		lockSum: 0.9 * opts.frames,
		lockMax: 0.9,
		aux: {},
		expectedSwitches: null,
		expectedEscapes: null
	});
	if (opts.snapshotSeq !== undefined) await db.insert(runSnapshots).values({ runId, lastSeq: opts.snapshotSeq, state: {} });
	return runId;
}

const seqsOf = async (runId: string) =>
	(await db.select({ seq: frames.seq }).from(frames).where(eq(frames.runId, runId)).orderBy(frames.seq)).map((r) => r.seq);

it('deletes an ended run’s frames older than the retention, keeping the newer ones and every rollup', async () => {
	// 72 hourly frames (3 days); keep 1 day: seqs 1–48 arrived more than 24 h ago.
	const runId = await runWith({ retentionDays: 1, status: 'ended', frames: 72 });
	const deleted = await applyRetention(db, NOW);
	expect(await seqsOf(runId)).toEqual(Array.from({ length: 24 }, (_, i) => 49 + i));
	expect(deleted).toBe(48);
	const rollups = await db.select().from(frameRollups).where(eq(frameRollups.runId, runId));
	expect(rollups).toHaveLength(1);
	expect(rollups[0].frames).toBe(72);
});

it('keeps an open run’s frames after its last detector snapshot, however old', async () => {
	const runId = await runWith({ retentionDays: 1, status: 'open', frames: 72, snapshotSeq: 30 });
	await applyRetention(db, NOW);
	// Old enough: 1–48; but a restart replays everything after seq 30.
	expect(await seqsOf(runId)).toEqual(Array.from({ length: 42 }, (_, i) => 31 + i));
});

it('keeps everything of an open run that has no snapshot yet, and of a setup without retention', async () => {
	const noSnapshot = await runWith({ retentionDays: 1, status: 'open', frames: 30 });
	const forever = await runWith({ retentionDays: null, status: 'ended', frames: 30 });
	await applyRetention(db, NOW);
	expect(await seqsOf(noSnapshot)).toHaveLength(30);
	expect(await seqsOf(forever)).toHaveLength(30);
});

it('deletes in chunks across a seq jump of billions without walking the empty range', async () => {
	const runId = await runWith({ retentionDays: 1, status: 'ended', frames: 40 });
	// Move the newest frame far up, as an agent that jumped to 2^31 − 1 would leave it.
	await db
		.update(frames)
		.set({ seq: 2147483647 })
		.where(and(eq(frames.runId, runId), eq(frames.seq, 40)));
	await db.update(runs).set({ lastSeq: 2147483647 }).where(eq(runs.id, runId));
	await applyRetention(db, new Date(NOW.getTime() + 10 * DAY));
	expect(await seqsOf(runId)).toEqual([]);
});

it('vacuums and checkpoints the embedded database', async () => {
	const report = await runMaintenance(db, NOW);
	expect(report.vacuumed).toEqual(expect.arrayContaining(['runs', 'run_snapshots', 'frame_rollups']));
});
