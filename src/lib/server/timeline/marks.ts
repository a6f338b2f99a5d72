// The marks a run's timeline draws over its tracks: gaps placed between their neighbouring
// frames, incidents on the agent's clock, notes. Bounded: at most MARKS_MAX gaps and incidents.
import { and, asc, desc, eq, gt, lt } from 'drizzle-orm';
import { agentTimeOf, type GapMark, type IncidentMark, type TimelineMarks } from '../../timeline/marks';
import { listAnnotations } from '../annotations/service';
import { silencesOfRun } from '../alerting/silences';
import type { Db } from '../db';
import { frameGaps, frames, incidents } from '../db/schema';
import type { RunRow } from '../runs/service';

export const MARKS_MAX = 500;

async function neighbourT(db: Db, runId: string, seq: number, side: 'before' | 'after'): Promise<number | null> {
	const [row] = await db
		.select({ t: frames.t })
		.from(frames)
		.where(and(eq(frames.runId, runId), side === 'before' ? lt(frames.seq, seq) : gt(frames.seq, seq)))
		.orderBy(side === 'before' ? desc(frames.seq) : asc(frames.seq))
		.limit(1);
	return row?.t ?? null;
}

export async function gapMarks(db: Db, runId: string): Promise<GapMark[]> {
	const gaps = await db.select().from(frameGaps).where(eq(frameGaps.runId, runId)).orderBy(asc(frameGaps.fromSeq)).limit(MARKS_MAX);
	const out: GapMark[] = [];
	for (const g of gaps) {
		const [before, after] = await Promise.all([neighbourT(db, runId, g.fromSeq, 'before'), neighbourT(db, runId, g.toSeq, 'after')]);
		if (before === null && after === null) continue;
		out.push({ fromSeq: g.fromSeq, toSeq: g.toSeq, from_ms: before ?? after!, to_ms: after ?? before! });
	}
	return out;
}

export async function incidentMarks(db: Db, run: RunRow): Promise<IncidentMark[]> {
	const rows = await db.select().from(incidents).where(eq(incidents.runId, run.id)).orderBy(asc(incidents.openedAt)).limit(MARKS_MAX);
	const lastAt = run.lastFrameAt?.getTime() ?? null;
	return rows.map((i) => ({
		id: i.id,
		kind: i.kind,
		severity: i.severity,
		state: i.state,
		summary: i.summary,
		from_ms: i.openedT ?? agentTimeOf(i.openedAt.getTime(), run.lastFrameT, lastAt),
		to_ms: i.resolvedAt ? agentTimeOf(i.resolvedAt.getTime(), run.lastFrameT, lastAt) : null
	}));
}

export async function timelineMarks(db: Db, run: RunRow): Promise<TimelineMarks> {
	const [gaps, incidentList, annotations, silenceRows] = await Promise.all([
		gapMarks(db, run.id),
		incidentMarks(db, run),
		listAnnotations(db, run.id),
		silencesOfRun(db, run.id)
	]);
	const lastAt = run.lastFrameAt?.getTime() ?? null;
	// Silences are set on the server's clock; placed on the agent's like the incidents.
	const onAgentClock = (d: Date) => agentTimeOf(d.getTime(), run.lastFrameT, lastAt);
	const silenceMarks = silenceRows.map((s) => ({
		id: s.id,
		// A silence set before the run began is drawn from the run's start, where the axis begins.
		from_ms: onAgentClock(s.startsAt > run.startedAt ? s.startsAt : run.startedAt),
		to_ms: onAgentClock(s.endedAt && s.endedAt < s.until ? s.endedAt : s.until),
		reason: s.kind ? `${s.reason} (${s.kind} only)` : s.reason,
		by: s.createdByName ?? ''
	}));
	return { gaps, incidents: incidentList, annotations, silences: silenceMarks };
}
