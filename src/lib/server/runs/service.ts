// Runs: one continuous measurement on a setup, opened by the agent's hello and closed by its end.
import { randomUUID } from 'node:crypto';
import { and, asc, desc, eq, gte, lte, type SQL } from 'drizzle-orm';
import type { RunDescription } from '../../protocol/messages';
import type { Db } from '../db';
import { frameGaps, frames, runs, setups } from '../db/schema';
import { rowToFrame } from '../ingest/frame-rows';
import { withLiveProgress } from './live-progress';

export type RunRow = typeof runs.$inferSelect;

/** The run with this agent key on the setup, created on first sight. */
export async function findOrCreateRun(db: Db, setupId: string, desc_: RunDescription, agent: string): Promise<RunRow> {
	const [existing] = await db
		.select()
		.from(runs)
		.where(and(eq(runs.setupId, setupId), eq(runs.key, desc_.key)));
	if (existing) return existing;
	const [row] = await db
		.insert(runs)
		.values({
			id: randomUUID(),
			setupId,
			key: desc_.key,
			name: desc_.name,
			order: desc_.order,
			states: desc_.states,
			modeGHz: desc_.mode_GHz,
			operatingPoint: desc_.operatingPoint ?? null,
			agent
		})
		.onConflictDoNothing()
		.returning();
	if (row) return row;
	// Two hellos raced; the other one created it.
	const [again] = await db
		.select()
		.from(runs)
		.where(and(eq(runs.setupId, setupId), eq(runs.key, desc_.key)));
	return again;
}

/** A run as the API shows it. */
export function publicRun(row: RunRow) {
	return { ...row };
}

export async function getRun(db: Db, id: string) {
	const [row] = await db.select().from(runs).where(eq(runs.id, id));
	return row ? withLiveProgress(row) : null;
}

export async function listRuns(db: Db, filter: { setup?: string; status?: 'open' | 'ended' }) {
	const where: SQL[] = [];
	if (filter.setup) where.push(eq(runs.setupId, filter.setup));
	if (filter.status) where.push(eq(runs.status, filter.status));
	const rows = await db
		.select({ run: runs, setupName: setups.name })
		.from(runs)
		.innerJoin(setups, eq(setups.id, runs.setupId))
		.where(where.length ? and(...where) : undefined)
		.orderBy(desc(runs.startedAt))
		.limit(500);
	return rows.map((r) => ({ ...publicRun(withLiveProgress(r.run)), setupName: r.setupName }));
}

export async function listGaps(db: Db, runId: string) {
	return db
		.select({ fromSeq: frameGaps.fromSeq, toSeq: frameGaps.toSeq, detectedAt: frameGaps.detectedAt })
		.from(frameGaps)
		.where(eq(frameGaps.runId, runId))
		.orderBy(asc(frameGaps.fromSeq));
}

export const FRAME_PAGE_DEFAULT = 600;
export const FRAME_PAGE_MAX = 5000;

/** Frames by seq range; without a range, the latest `limit` frames. Always ascending by seq. */
export async function listFrames(db: Db, runId: string, q: { from?: number; to?: number; limit?: number }) {
	const limit = Math.min(q.limit ?? FRAME_PAGE_DEFAULT, FRAME_PAGE_MAX);
	const where: SQL[] = [eq(frames.runId, runId)];
	if (q.from !== undefined) where.push(gte(frames.seq, q.from));
	if (q.to !== undefined) where.push(lte(frames.seq, q.to));
	const fromStart = q.from !== undefined;
	const rows = await db
		.select()
		.from(frames)
		.where(and(...where))
		.orderBy(fromStart ? asc(frames.seq) : desc(frames.seq))
		.limit(limit);
	if (!fromStart) rows.reverse();
	return rows.map(rowToFrame);
}

/** Phase-state occupancy summed over the latest frames, for the occupancy bars. */
export async function recentOccupancy(db: Db, runId: string, states: number, windows = 60) {
	const recent = await listFrames(db, runId, { limit: windows });
	const counts = new Array<number>(states).fill(0);
	let vacuum = 0;
	let shots = 0;
	for (const f of recent) {
		f.counts.forEach((c, i) => (counts[i] += c));
		vacuum += f.vacuum;
		shots += f.shots;
	}
	return { counts, vacuum, shots, fromSeq: recent[0]?.seq ?? null, toSeq: recent.at(-1)?.seq ?? null };
}

export async function endRun(db: Db, runId: string, reason: string) {
	const [row] = await db
		.update(runs)
		.set({ status: 'ended', endedAt: new Date(), endReason: reason })
		.where(and(eq(runs.id, runId), eq(runs.status, 'open')))
		.returning();
	return row ?? null;
}
