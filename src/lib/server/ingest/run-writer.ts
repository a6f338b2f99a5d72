// Commits one run's frames in batches: store, mark gaps, run the detectors, record incidents, then
// ack. One writer per run, so frames of a run are committed strictly in seq order.
import { eq, sql } from 'drizzle-orm';
import type { Frame } from '../../protocol/frame';
import { DetectorEngine } from '../../detect/engine';
import type { DetectorEvent } from '../../detect/events';
import type { RunInfo } from '../../detect/run-info';
import type { Db } from '../db';
import { frameGaps, frames, runs } from '../db/schema';
import { clearCondition, openIncident, type IncidentRow } from '../incidents/service';
import type { RunRow } from '../runs/service';
import { frameToRow } from './frame-rows';

/** Frames written in one transaction; larger bursts are split so other work gets a turn between. */
const BATCH = 500;

export interface CommitResult {
	lastSeq: number;
	stored: Frame[];
	opened: IncidentRow[];
	resolved: IncidentRow[];
	run: RunRow;
}

export function engineFor(run: RunRow, rules: unknown, info: RunInfo): DetectorEngine {
	if (run.detectorState) {
		try {
			return DetectorEngine.restore(run.detectorState);
		} catch (err) {
			console.warn(`run ${run.id}: detector state unreadable, starting fresh: ${(err as Error).message}`);
		}
	}
	return new DetectorEngine(rules, info);
}

export class RunWriter {
	private pending: Frame[] = [];
	private chain: Promise<void> = Promise.resolve();
	private scheduled = false;
	engine: DetectorEngine;

	constructor(
		private db: Db,
		public run: RunRow,
		rules: unknown,
		info: RunInfo,
		private onCommit: (result: CommitResult) => void,
		private onFailure: (err: Error) => void
	) {
		this.engine = engineFor(run, rules, info);
	}

	get lastSeq() {
		return this.run.lastSeq;
	}

	/** Queues frames (already validated); they are committed together with whatever else arrives this tick. */
	enqueue(batch: Frame[]) {
		this.pending.push(...batch);
		if (this.scheduled) return;
		this.scheduled = true;
		setImmediate(() => {
			this.scheduled = false;
			this.chain = this.chain.then(() => this.drain()).catch((err) => this.onFailure(err as Error));
		});
	}

	/** Resolves when everything queued so far is committed (or failed). */
	idle(): Promise<void> {
		return new Promise((resolve) => setImmediate(() => this.chain.then(resolve, resolve)));
	}

	/**
	 * Runs engine work that comes with no frame (clock ticks, end of run) in turn with the commits,
	 * and records its events in a transaction of their own.
	 */
	async applyEngine(produce: (engine: DetectorEngine) => DetectorEvent[]) {
		const done = this.chain.then(async () => {
			const events = produce(this.engine);
			if (events.length === 0) return;
			const result = await this.db.transaction(async (tx) => {
				const r = await recordEvents(tx as unknown as Db, this.run, events);
				await tx.update(runs).set({ detectorState: this.engine.snapshot() }).where(eq(runs.id, this.run.id));
				return r;
			});
			this.onCommit({ lastSeq: this.run.lastSeq, stored: [], run: this.run, ...result });
		});
		this.chain = done.catch((err) => this.onFailure(err as Error));
		return done;
	}

	private async drain() {
		while (this.pending.length > 0) {
			const batch = this.pending.splice(0, BATCH);
			await this.commit(batch);
			if (this.pending.length > 0) await new Promise((r) => setImmediate(r));
		}
	}

	private async commit(batch: Frame[]) {
		// Duplicates (at or below the committed seq) are acked but never stored twice.
		const fresh = batch.filter((f) => f.seq > this.run.lastSeq).sort((a, b) => a.seq - b.seq);
		const unique = fresh.filter((f, i) => i === 0 || f.seq !== fresh[i - 1].seq);
		if (unique.length === 0) {
			this.onCommit({ lastSeq: this.run.lastSeq, stored: [], opened: [], resolved: [], run: this.run });
			return;
		}
		const before = this.engine.snapshot();
		const receivedAt = Date.now();
		const gaps: { fromSeq: number; toSeq: number }[] = [];
		const events: DetectorEvent[] = [];
		let prev = this.run.lastSeq;
		for (const f of unique) {
			if (f.seq > prev + 1) gaps.push({ fromSeq: prev + 1, toSeq: f.seq - 1 });
			prev = f.seq;
			events.push(...this.engine.onFrame(f, receivedAt));
		}
		const last = unique[unique.length - 1];
		try {
			const { run, opened, resolved } = await this.db.transaction(async (tx) => {
				await tx.insert(frames).values(unique.map((f) => frameToRow(this.run.id, f))).onConflictDoNothing();
				if (gaps.length) await tx.insert(frameGaps).values(gaps.map((g) => ({ runId: this.run.id, ...g })));
				const recorded = await recordEvents(tx as unknown as Db, this.run, events);
				const [run] = await tx
					.update(runs)
					.set({
						lastSeq: last.seq,
						lastFrameT: Math.round(last.t),
						lastFrameAt: new Date(receivedAt),
						lastLock: last.lock,
						frameCount: sql`${runs.frameCount} + ${unique.length}`,
						gapCount: sql`${runs.gapCount} + ${gaps.length}`,
						detectorState: this.engine.snapshot()
					})
					.where(eq(runs.id, this.run.id))
					.returning();
				return { run, ...recorded };
			});
			this.run = run;
			this.onCommit({ lastSeq: run.lastSeq, stored: unique, opened, resolved, run });
		} catch (err) {
			// Nothing was committed: put the detectors back so a resend replays the same frames.
			this.engine = DetectorEngine.restore(before);
			throw err;
		}
	}
}

async function recordEvents(tx: Db, run: RunRow, events: DetectorEvent[]) {
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
