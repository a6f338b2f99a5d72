// Replays a stored run through a fresh detector engine with given rules and compares the result
// with the incidents raised live. Reads only: nothing real is changed. The frames are read a page
// at a time and the engine runs in a worker thread, so live agents keep their turn meanwhile.
import { and, eq, inArray } from 'drizzle-orm';
import { compareReplay, type ActualIncident } from '../../detect/replay';
import { parseDetectorRules } from '../../detect/rules';
import type { Db } from '../db';
import { frames as framesTable, incidentEvents } from '../db/schema';
import { listIncidents } from '../incidents/service';
import { runInfoFor } from '../runs/detector-context';
import { framePages } from '../runs/frame-pages';
import type { RunRow } from '../runs/service';
import { replayInWorker, type ReplayControl } from './replay-in-worker';
import type { FramePage } from './worker-protocol';

/**
 * Rows per page read for a replay. PGlite runs in this process, so a query holds the event loop
 * for as long as it takes: pages stay small, and live ingest gets a turn between them.
 */
export const REPLAY_PAGE_ROWS = 200;

export interface ReplayStoredRunOptions extends ReplayControl {
	pageSize?: number;
}

export async function replayStoredRun(db: Db, run: RunRow, rulesInput: unknown, control: ReplayStoredRunOptions = {}) {
	// Throws a RangeError naming the field for a bad rule set (the route answers 400).
	const rules = parseDetectorRules(rulesInput);
	const [info, actualList] = await Promise.all([
		runInfoFor(db, run),
		listIncidents(db, { run: run.id, sort: 'openedAt', order: 'asc', page: 1, pageSize: 200 })
	]);
	// Late frames (filled a gap after a higher seq) were stored but never fed to the live detectors.
	const pages = pagesOf(framePages(db, run.id, { pageSize: control.pageSize ?? REPLAY_PAGE_ROWS, skipLate: true, withoutIq: true }));
	const { frameCount, incidents: replayed } = await replayInWorker(
		pages,
		{ rules, run: info, endedAt_ms: run.endedAt?.getTime() },
		control
	);
	const actual = await asReplayable(db, run.id, actualList.incidents);
	const comparison = compareReplay(actual, replayed);
	return {
		rules,
		frameCount,
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

/**
 * Share of the main thread (and of the one database connection) a replay may take: after each
 * page it waits twice as long as the page took to read, so live ingest keeps its acks prompt while
 * a day-long run is replayed; the replay is slower, and says how far it is.
 */
const REPLAY_DUTY = 1 / 3;

async function* pagesOf(stored: ReturnType<typeof framePages>): AsyncGenerator<FramePage> {
	const iterator = stored[Symbol.asyncIterator]();
	for (;;) {
		const started = performance.now();
		const next = await iterator.next();
		if (next.done) return;
		const page = next.value;
		const frames = page.map((s) => s.frame);
		const receivedAt_ms = page.map((s) => s.receivedAt_ms);
		const busy_ms = performance.now() - started;
		await new Promise((resolve) => setTimeout(resolve, (busy_ms * (1 - REPLAY_DUTY)) / REPLAY_DUTY));
		yield { frames, receivedAt_ms };
	}
}

type Listed = Awaited<ReturnType<typeof listIncidents>>['incidents'][number];

/**
 * Live incidents on the replay's clock: frame-driven kinds on the agent's time (the frame that
 * opened and the frame that cleared them), agent_silent on the server's.
 */
async function asReplayable(db: Db, runId: string, list: Listed[]): Promise<ActualIncident[]> {
	const ids = list.map((i) => i.id);
	const cleared = ids.length
		? await db
				.select({ incidentId: incidentEvents.incidentId, data: incidentEvents.data, at: incidentEvents.at })
				.from(incidentEvents)
				.where(and(inArray(incidentEvents.incidentId, ids), eq(incidentEvents.action, 'auto_resolved')))
		: [];
	const clearOf = new Map(cleared.map((c) => [c.incidentId, c]));
	// The frames' own time of the frames that cleared them: a few rows, not the whole run.
	const clearSeqs = [...new Set(cleared.map((c) => c.data?.seq).filter((q): q is number => typeof q === 'number'))];
	const tRows = clearSeqs.length
		? await db
				.select({ seq: framesTable.seq, t: framesTable.t })
				.from(framesTable)
				.where(and(eq(framesTable.runId, runId), inArray(framesTable.seq, clearSeqs)))
		: [];
	const tOfSeq = new Map(tRows.map((r) => [r.seq, r.t]));
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
