// Commits one run's frames in batches: store the frames and their rollups, keep the missing seq
// ranges, run the detectors, record incidents, then ack. One writer per run, so a run's frames are
// committed strictly one batch after another.
//
// The detector state is not written with every commit: it is saved every few seconds (and at run
// end, on rule changes, on clock-driven events and at shutdown). A restart, or a failed commit,
// rebuilds the engine from the last snapshot plus the frames stored after it (snapshots.ts).
// Likewise the run row's progress (last seq, frame count) is written at most every few seconds;
// readers overlay the writer's copy (runs/live-progress.ts), and a new writer recomputes it from
// the stored frames, which are the truth.
import { and, eq, sql } from 'drizzle-orm';
import type { Frame } from '../../protocol/frame';
import type { DetectorEngine } from '../../detect/engine';
import type { DetectorEvent } from '../../detect/events';
import type { FrameExpectation } from '../../detect/expected';
import type { RunInfo } from '../../detect/run-info';
import { rollupFrames } from '../../rollup/rollup';
import type { Db, Tx } from '../db';
import { frameGaps } from '../db/schema';
import { clearCondition, openIncident, type IncidentRow } from '../incidents/service';
import { mergeWithStored, ROLLUP_ROWS_PER_STATEMENT, RollupCache, upsertRollups } from '../rollups/store';
import type { RunRow } from '../runs/service';
import { forgetProgress, rememberProgress, type RunProgressFields } from '../runs/live-progress';
import { progressUpdate, writeBatch, type FrameToStore } from './batch-write';
import type { GroupCommitter } from './group-commit';
import { SeqGaps, type GapChange, type SeqGap } from './seq-gaps';
import { restoreEngine, saveSnapshot } from './snapshots';

/** Frames written in one transaction; larger bursts are split so other work gets a turn between. */
const BATCH = 500;

export interface SnapshotPolicy {
	/** Save at most this often while frames arrive. */
	everyMs: number;
	/** ...or after this many fed frames, whichever comes first (bounds the replay after a restart). */
	everyFrames: number;
}

/** What one imported batch did: frames stored (new or gap-filling) and seqs already stored. */
export interface ImportBatchOutcome {
	stored: number;
	filledGaps: number;
	duplicates: number[];
}

export const DEFAULT_SNAPSHOT_POLICY: SnapshotPolicy = { everyMs: 30_000, everyFrames: 20_000 };

/** The run row's progress is written at least this often while frames arrive (and on every other write). */
export const PROGRESS_EVERY_MS = 5_000;

export interface CommitResult {
	lastSeq: number;
	/** Frames newly stored in seq order above the previous last seq (late gap fillers are left out). */
	stored: Frame[];
	opened: IncidentRow[];
	resolved: IncidentRow[];
	run: RunRow;
}

function expectedCounts(e: FrameExpectation | undefined) {
	if (!e) return null;
	return { switches: e.switching?.expected ?? null, escapes: e.escape?.expected ?? null };
}

export class RunWriter {
	private pending: Frame[] = [];
	private chain: Promise<void> = Promise.resolve();
	private scheduled = false;
	/** Set when a commit failed: the engine may be ahead of the database, so this writer stops. */
	private broken = false;
	/** Handing the run to another instance: frames that still arrive are left unacked, to be resent there. */
	private retired = false;
	private fedSinceSnapshot = 0;
	private lastSnapshotAt = Date.now();
	private rollups = new RollupCache();
	/** When the run row last got this writer's progress; 0 = it never did. */
	private progressWrittenAt = 0;
	private progressDirty = false;

	private constructor(
		private db: Db,
		private committer: GroupCommitter,
		public run: RunRow,
		public engine: DetectorEngine,
		private gaps: SeqGaps,
		private policy: SnapshotPolicy,
		private onCommit: (result: CommitResult) => void,
		private onFailure: (err: Error) => void
	) {}

	/** The writer of a run: its engine restored from the last snapshot and the frames after it. */
	static async open(
		db: Db,
		committer: GroupCommitter,
		run: RunRow,
		rules: unknown,
		info: RunInfo,
		policy: SnapshotPolicy,
		onCommit: (result: CommitResult) => void,
		onFailure: (err: Error) => void
	): Promise<RunWriter> {
		const [{ engine, replayed }, gapRows] = await Promise.all([
			restoreEngine(db, run.id, rules, info),
			db
				.select({ fromSeq: frameGaps.fromSeq, toSeq: frameGaps.toSeq, detectedAt: frameGaps.detectedAt })
				.from(frameGaps)
				.where(eq(frameGaps.runId, run.id))
		]);
		const caughtUp = await catchUpProgress(db, run, gapRows.length);
		const writer = new RunWriter(db, committer, caughtUp, engine, new SeqGaps(gapRows), policy, onCommit, onFailure);
		// Frames replayed since the snapshot count towards the next one.
		writer.fedSinceSnapshot = replayed;
		if (caughtUp !== run) {
			await db.execute(progressUpdate(run.id, progressOf(caughtUp)));
			writer.progressWrittenAt = Date.now();
		}
		rememberProgress(run.id, progressOf(caughtUp));
		return writer;
	}

	/** The writer is being dropped: its run's progress is read from the row again. */
	release() {
		forgetProgress(this.run.id);
	}

	/** Takes no more frames; what is queued is still committed (wait with `idle`). */
	retire() {
		this.retired = true;
	}

	get lastSeq() {
		return this.run.lastSeq;
	}

	get failed() {
		return this.broken;
	}

	/** Queues frames (already validated); they are committed together with whatever else arrives this tick. */
	enqueue(batch: Frame[]) {
		if (this.broken || this.retired) return;
		this.pending.push(...batch);
		if (this.scheduled) return;
		this.scheduled = true;
		setImmediate(() => {
			this.scheduled = false;
			this.chain = this.chain.then(() => this.drain()).catch((err) => this.fail(err as Error));
		});
	}

	/** Resolves when everything queued so far is committed (or failed). */
	idle(): Promise<void> {
		return new Promise((resolve) => setImmediate(() => this.chain.then(resolve, resolve)));
	}

	/**
	 * Runs engine work that comes with no frame (clock ticks, rule changes, end of run) in turn with
	 * the commits, and records its events with a snapshot in a transaction of their own. Clock
	 * ticks that change nothing (no event) write nothing.
	 */
	async applyEngine(
		produce: (engine: DetectorEngine) => DetectorEvent[],
		options: { snapshot: 'always' | 'on-event' } = { snapshot: 'always' }
	) {
		const done = this.chain.then(async () => {
			if (this.broken) return;
			const events = produce(this.engine);
			if (events.length === 0 && options.snapshot === 'on-event') return;
			const progress = this.progressDirty;
			const result = await this.db.transaction(async (tx) => {
				const r = await recordEvents(tx, this.run, events);
				await saveSnapshot(tx, this.run.id, this.engine);
				// The run row catches up too: this is also how the end of a run leaves it current.
				if (progress) await tx.execute(progressUpdate(this.run.id, progressOf(this.run)));
				return r;
			});
			this.snapshotSaved(Date.now());
			if (progress) this.progressSaved(Date.now());
			if (events.length) this.onCommit({ lastSeq: this.run.lastSeq, stored: [], run: this.run, ...result });
		});
		this.chain = done.catch((err) => this.fail(err as Error));
		return done;
	}

	/**
	 * Stores frames from a file (recorded while the link was down) in turn with the live commits.
	 * They are historical: stored like late frames, never fed to the detectors. Frames in the run's
	 * gaps fill them; above the last seq they extend the run (the caller allows that only for a run
	 * no agent is streaming); any other seq is already stored and is reported as a duplicate.
	 */
	importBatch(batch: Frame[]): Promise<ImportBatchOutcome> {
		const done = this.chain.then(() => {
			if (this.broken) throw new Error(`run ${this.run.id}: its writer failed; try the import again`);
			if (this.retired) throw new Error(`run ${this.run.id}: an agent took the run up on another instance; try the import again`);
			return this.commit(batch, true);
		});
		this.chain = done.then(
			() => undefined,
			(err) => this.fail(err as Error)
		);
		return done;
	}

	/**
	 * Saves the detector state if frames were fed since the last save and it is older than
	 * `olderThanMs`, and the run's progress if the row is behind and was written over
	 * PROGRESS_EVERY_MS ago (or `olderThanMs` is 0: at shutdown and run end).
	 */
	saveSnapshotIfStale(now_ms: number, olderThanMs = this.policy.everyMs): Promise<void> {
		const done = this.chain.then(async () => {
			if (this.broken) return;
			const snapshot = this.fedSinceSnapshot > 0 && now_ms - this.lastSnapshotAt >= olderThanMs;
			const progress = this.progressDirty && (olderThanMs === 0 || now_ms - this.progressWrittenAt >= PROGRESS_EVERY_MS);
			if (!snapshot && !progress) return;
			const written = progressOf(this.run);
			await this.db.transaction(async (tx) => {
				if (snapshot) await saveSnapshot(tx, this.run.id, this.engine);
				if (progress) await tx.execute(progressUpdate(this.run.id, written));
			});
			if (snapshot) this.snapshotSaved(now_ms);
			if (progress) this.progressSaved(now_ms);
		});
		this.chain = done.catch((err) => this.fail(err as Error));
		return done;
	}

	private progressSaved(at_ms: number) {
		this.progressDirty = false;
		this.progressWrittenAt = at_ms;
	}

	private snapshotSaved(at_ms: number) {
		this.fedSinceSnapshot = 0;
		this.lastSnapshotAt = at_ms;
	}

	private fail(err: Error) {
		this.broken = true;
		this.pending = [];
		this.onFailure(err);
	}

	private async drain() {
		while (this.pending.length > 0 && !this.broken) {
			const batch = this.pending.splice(0, BATCH);
			await this.commit(batch);
			if (this.pending.length > 0) await new Promise((r) => setImmediate(r));
		}
	}

	private async commit(batch: Frame[], imported = false): Promise<ImportBatchOutcome> {
		const sorted = [...batch].sort((a, b) => a.seq - b.seq);
		// Above the last seq: new. At or below it: late data when its seq is missing, else a duplicate
		// (acked, never stored twice).
		const fresh: Frame[] = [];
		const late: Frame[] = [];
		const duplicates: number[] = [];
		sorted.forEach((f, i) => {
			if (i > 0 && f.seq === sorted[i - 1].seq) duplicates.push(f.seq);
			else if (f.seq > this.run.lastSeq) fresh.push(f);
			else if (this.gaps.contains(f.seq)) late.push(f);
			else duplicates.push(f.seq);
		});
		if (fresh.length === 0 && late.length === 0) {
			this.onCommit({ lastSeq: this.run.lastSeq, stored: [], opened: [], resolved: [], run: this.run });
			return { stored: 0, filledGaps: 0, duplicates };
		}

		const receivedAt = Date.now();
		const filled: GapChange[] = late.map((f) => this.gaps.fill(f.seq)!);
		const opened: SeqGap[] = [];
		const events: DetectorEvent[] = [];
		let prev = this.run.lastSeq;
		for (const f of fresh) {
			if (f.seq > prev + 1) opened.push(this.gaps.add(prev + 1, f.seq - 1, new Date(receivedAt)));
			prev = f.seq;
			if (!imported) events.push(...this.engine.onFrame(f, receivedAt));
		}
		if (!imported) this.fedSinceSnapshot += fresh.length;
		const snapshotDue =
			!imported &&
			fresh.length > 0 &&
			(this.fedSinceSnapshot >= this.policy.everyFrames || receivedAt - this.lastSnapshotAt >= this.policy.everyMs);
		const toStore: FrameToStore[] = [...late.map((frame) => ({ frame, late: true })), ...fresh.map((frame) => ({ frame, late: imported }))];
		const last = fresh.at(-1);
		const gapCount = this.gaps.count;
		// If every frame is stored (a shortfall stops this writer below, and the next one recounts).
		const progress: RunProgressFields = {
			...progressOf(this.run),
			...(last ? { lastSeq: last.seq, lastFrameT: Math.round(last.t), lastFrameAt: new Date(receivedAt), lastLock: last.lock } : {}),
			frameCount: this.run.frameCount + toStore.length,
			gapCount
		};

		try {
			const deltas = rollupFrames(
				toStore.map((s) => s.frame),
				(f) => expectedCounts(this.engine.expect(f))
			);
			const rollups = await mergeWithStored(this.db, this.run.id, deltas, this.rollups);
			const fits = rollups.length <= ROLLUP_ROWS_PER_STATEMENT;
			const extra = events.length > 0 || filled.length > 0 || opened.length > 0 || snapshotDue || !fits;
			// Written along whenever the transaction does more than store frames (so the row's counts
			// move with gap changes and incidents), else at most every PROGRESS_EVERY_MS.
			const writeProgress = extra || receivedAt - this.progressWrittenAt >= PROGRESS_EVERY_MS;
			// Only the database is touched in here: the group committer may run it twice.
			const work = async (tx: Tx | Db) => {
				const storedSeqs = await writeBatch(
					tx,
					this.run.id,
					new Date(receivedAt),
					toStore,
					fits ? rollups : [],
					writeProgress ? progress : null
				);
				if (!extra) return { storedSeqs, recorded: { opened: [], resolved: [] } };
				if (!fits) await upsertRollups(tx as Db, this.run.id, rollups);
				await writeGapChanges(tx, this.run.id, filled, opened);
				const recorded = await recordEvents(tx, this.run, events);
				if (snapshotDue) await saveSnapshot(tx, this.run.id, this.engine);
				return { storedSeqs, recorded };
			};
			const { storedSeqs, recorded } = await this.committer.run(work, { singleStatement: !extra });
			if (storedSeqs.size !== toStore.length) {
				// The writer's gap list said these seqs were missing, yet some were stored already: only
				// another writer of the same run could do that. Its rollups may now count them twice.
				console.error(
					`run ${this.run.id}: ${toStore.length - storedSeqs.size} frames believed missing were already stored; ` +
						'the rollups of this span may be off (npm run rollups:rebuild fixes them); restarting this writer'
				);
				this.broken = true;
			}
			for (const r of rollups) this.rollups.remember(r);
			if (snapshotDue) this.snapshotSaved(receivedAt);
			this.run = { ...this.run, ...progress };
			rememberProgress(this.run.id, progress);
			if (writeProgress) this.progressSaved(receivedAt);
			else this.progressDirty = true;
			// Imported frames are history, not live news: nothing is published as newly arrived.
			const published = imported ? [] : fresh.filter((f) => storedSeqs.has(f.seq));
			this.onCommit({ lastSeq: this.run.lastSeq, stored: published, run: this.run, ...recorded });
			if (this.broken) throw new Error(`run ${this.run.id}: writer out of step with the database`);
			return { stored: storedSeqs.size, filledGaps: late.length, duplicates };
		} catch (err) {
			// Nothing was committed, but the engine and the gap list moved on: this writer is done, and
			// the next one restores both from the database.
			this.broken = true;
			throw err;
		}
	}
}

function progressOf(run: RunRow): RunProgressFields {
	const { lastSeq, lastFrameT, lastFrameAt, lastLock, frameCount, gapCount } = run;
	return { lastSeq, lastFrameT, lastFrameAt, lastLock, frameCount, gapCount };
}

/**
 * The run row with the frames stored after its progress was last written (the server may have
 * stopped in between): the newest stored frame and how many came after the row's last seq. Late
 * frames always wrote the row in their own commit, so counting above its last seq is exact.
 */
async function catchUpProgress(db: Db, run: RunRow, gapCount: number): Promise<RunRow> {
	const { rows } = await db.execute<{ seq: number; t: string; lock: number; created_at: string; newer: string }>(sql`
		SELECT f.seq, f.t, f.lock, f.created_at,
			(SELECT count(*) FROM frames WHERE run_id = ${run.id} AND seq > ${run.lastSeq}) AS newer
		FROM frames f WHERE f.run_id = ${run.id} AND f.seq > ${run.lastSeq}
		ORDER BY f.seq DESC LIMIT 1`);
	const newest = rows[0];
	if (!newest && run.gapCount === gapCount) return run;
	if (!newest) return { ...run, gapCount };
	return {
		...run,
		lastSeq: Number(newest.seq),
		lastFrameT: Number(newest.t),
		lastFrameAt: new Date(newest.created_at),
		lastLock: Number(newest.lock),
		frameCount: run.frameCount + Number(newest.newer),
		gapCount
	};
}

async function writeGapChanges(tx: Tx | Db, runId: string, filled: GapChange[], opened: SeqGap[]) {
	// In order: a range split by one late frame may be split again by the next.
	for (const change of filled) {
		await tx.delete(frameGaps).where(and(eq(frameGaps.runId, runId), eq(frameGaps.fromSeq, change.removed.fromSeq)));
		if (change.added.length) await tx.insert(frameGaps).values(change.added.map((g) => ({ runId, ...g })));
	}
	if (opened.length) await tx.insert(frameGaps).values(opened.map((g) => ({ runId, ...g })));
}

async function recordEvents(tx: Tx | Db, run: RunRow, events: DetectorEvent[]) {
	const opened: IncidentRow[] = [];
	const resolved: IncidentRow[] = [];
	for (const e of events) {
		if (e.type === 'open') {
			const row = await openIncident(tx, run, {
				kind: e.kind,
				key: e.key,
				severity: e.severity,
				summary: e.summary,
				evidence: e.evidence,
				seq: e.seq,
				t: e.seq !== undefined ? e.at_ms : undefined
			});
			if (row) opened.push(row);
		} else if (e.type === 'clear') {
			const row = await clearCondition(tx, run.id, { kind: e.kind, key: e.key, summary: e.summary, evidence: e.evidence, seq: e.seq });
			if (row) resolved.push(row);
		}
		// 'update' refreshes evidence of an open condition; the incident keeps the evidence it opened with.
	}
	return { opened, resolved };
}
