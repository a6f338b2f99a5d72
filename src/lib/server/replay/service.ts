// Replays a stored run through a fresh detector engine with given rules and compares the result
// with the incidents raised live. Reads only: nothing real is changed.
import { and, asc, eq, inArray } from 'drizzle-orm';
import { compareReplay, replayIncidents, replayRun, type ActualIncident } from '../../detect/replay';
import { parseDetectorRules } from '../../detect/rules';
import type { Db } from '../db';
import { frames as framesTable, incidentEvents } from '../db/schema';
import { rowToFrame } from '../ingest/frame-rows';
import { listIncidents } from '../incidents/service';
import { runInfoFor } from '../runs/detector-context';
import type { RunRow } from '../runs/service';

export async function replayStoredRun(db: Db, run: RunRow, rulesInput: unknown) {
	// Throws a RangeError naming the field for a bad rule set (the route answers 400).
	const rules = parseDetectorRules(rulesInput);
	const [rows, info, actualList] = await Promise.all([
		db.select().from(framesTable).where(eq(framesTable.runId, run.id)).orderBy(asc(framesTable.seq)),
		runInfoFor(db, run),
		listIncidents(db, { run: run.id, sort: 'openedAt', order: 'asc', page: 1, pageSize: 200 })
	]);
	const frames = rows.map(rowToFrame);
	const receivedAt = rows.map((r) => r.receivedAt.getTime());
	const events = replayRun(frames, rules, info, {
		receivedAt_ms: (_f, i) => receivedAt[i],
		endedAt_ms: run.endedAt?.getTime()
	});
	const replayed = replayIncidents(events);
	const actual = await asReplayable(db, actualList.incidents, new Map(frames.map((f) => [f.seq, f.t])));
	const comparison = compareReplay(actual, replayed);
	return {
		rules,
		frameCount: frames.length,
		replayed,
		// Live incidents with the clear time on the replay's clock, so both can share one timeline.
		actual: actualList.incidents.map((inc, k) => ({ ...inc, clearedAt_ms: actual[k].clearedAt_ms })),
		comparison: {
			both: comparison.both.map((b) => ({ actualId: b.actual.id, replayIndex: replayed.indexOf(b.replay), openShift_ms: b.openShift_ms })),
			onlyReplay: comparison.onlyReplay.map((r) => replayed.indexOf(r)),
			onlyActual: comparison.onlyActual.map((a) => a.id)
		}
	};
}

type Listed = Awaited<ReturnType<typeof listIncidents>>['incidents'][number];

/**
 * Live incidents on the replay's clock: frame-driven kinds on the agent's time (the frame that
 * opened and the frame that cleared them), agent_silent on the server's.
 */
async function asReplayable(db: Db, list: Listed[], tOfSeq: Map<number, number>): Promise<ActualIncident[]> {
	const ids = list.map((i) => i.id);
	const cleared = ids.length
		? await db
				.select({ incidentId: incidentEvents.incidentId, data: incidentEvents.data, at: incidentEvents.at })
				.from(incidentEvents)
				.where(and(inArray(incidentEvents.incidentId, ids), eq(incidentEvents.action, 'auto_resolved')))
		: [];
	const clearOf = new Map(cleared.map((c) => [c.incidentId, c]));
	return list.map((i) => {
		const clear = clearOf.get(i.id);
		const clearSeq = typeof clear?.data?.seq === 'number' ? clear.data.seq : null;
		const onFrames = i.openedT !== null;
		return {
			id: i.id,
			kind: i.kind,
			key: i.key,
			severity: i.severity,
			openedSeq: i.openedSeq,
			openedAt_ms: onFrames ? i.openedT! : i.openedAt.getTime(),
			clearedAt_ms: clear ? (onFrames && clearSeq !== null ? (tOfSeq.get(clearSeq) ?? null) : clear.at.getTime()) : null,
			summary: i.summary
		};
	});
}
