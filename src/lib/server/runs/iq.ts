// The summed IQ histogram of a run over a span of agent time, for the phase-space picture. The
// read is bounded: a span with more frames than IQ_FRAMES_MAX is sampled evenly by seq, and the
// answer says so.
import { and, count, eq, gte, isNotNull, lte, sql, asc, type SQL } from 'drizzle-orm';
import type { Db } from '../db';
import { frames } from '../db/schema';
import { lobeCentres, sumIq } from '../../iq/histogram';
import type { RunIq } from '../../iq/run-iq';
import type { RunRow } from './service';

export type { RunIq };

export const IQ_FRAMES_MAX = 2000;
/** Without a span the picture shows the run's last hour. */
export const IQ_DEFAULT_SPAN_MS = 3_600_000;

export type IqSpan = { from_ms?: number; to_ms?: number };

export function resolveIqSpan(run: Pick<RunRow, 'lastFrameT'>, span: IqSpan): { from_ms: number; to_ms: number } {
	const to_ms = span.to_ms ?? run.lastFrameT ?? Date.now();
	const from_ms = span.from_ms ?? to_ms - IQ_DEFAULT_SPAN_MS;
	if (from_ms > to_ms) throw new RangeError(`iq: from_ms (${from_ms}) is after to_ms (${to_ms})`);
	return { from_ms, to_ms };
}

export async function runIq(db: Db, run: Pick<RunRow, 'id' | 'states' | 'lastFrameT'>, span: IqSpan = {}): Promise<RunIq> {
	const { from_ms, to_ms } = resolveIqSpan(run, span);
	const where: SQL[] = [eq(frames.runId, run.id), isNotNull(frames.iq), gte(frames.t, from_ms), lte(frames.t, to_ms)];
	const [{ n }] = await db
		.select({ n: count() })
		.from(frames)
		.where(and(...where));
	const sampledEvery = Math.max(1, Math.ceil(n / IQ_FRAMES_MAX));
	if (sampledEvery > 1) where.push(sql`${frames.seq} % ${sampledEvery} = 0`);
	const rows = await db
		.select({ seq: frames.seq, t: frames.t, iq: frames.iq, counts: frames.counts, vacuum: frames.vacuum, shots: frames.shots })
		.from(frames)
		.where(and(...where))
		.orderBy(asc(frames.seq))
		.limit(IQ_FRAMES_MAX);
	const sum = sumIq(rows.map((r) => r.iq));
	const occupancy = {
		counts: new Array<number>(run.states).fill(0),
		vacuum: 0,
		shots: 0,
		fromSeq: rows[0]?.seq ?? null,
		toSeq: rows.at(-1)?.seq ?? null
	};
	for (const r of rows) {
		r.counts.forEach((c, i) => {
			if (i < run.states) occupancy.counts[i] += c;
		});
		occupancy.vacuum += r.vacuum;
		occupancy.shots += r.shots;
	}
	return {
		from_ms,
		to_ms,
		firstFrame_ms: rows[0]?.t ?? null,
		lastFrame_ms: rows.at(-1)?.t ?? null,
		states: run.states,
		framesWithIq: n,
		sampledEvery,
		sum,
		lobes: sum ? lobeCentres(sum, run.states) : [],
		occupancy
	};
}
