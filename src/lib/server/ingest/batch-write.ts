// One run's batch as ONE SQL statement: the frames (sent as a single jsonb parameter and unpacked
// by jsonb_to_recordset, whose column names are the wire frame's field names), their rollup rows
// (already merged with the stored ones) and the run's progress, in data-modifying CTEs. A single
// statement is atomic on its own, so the common commit is one round trip into the database and
// one fsync, instead of BEGIN, three statements and COMMIT.
import { sql } from 'drizzle-orm';
import type { Frame } from '../../protocol/frame';
import type { Rollup } from '../../rollup/rollup';
import type { Db, Tx } from '../db';
import { ROLLUP_ROWS_PER_STATEMENT } from '../rollups/store';
import type { RunProgressFields } from '../runs/live-progress';

export interface FrameToStore {
	frame: Frame;
	/** Arrived after a higher seq (fills a gap); never fed to the detectors. */
	late: boolean;
}

function framesJson(batch: readonly FrameToStore[]): string {
	return JSON.stringify(batch.map(({ frame, late }) => ({ ...frame, t: Math.round(frame.t), late })));
}

function rollupsJson(rows: readonly Rollup[]): string {
	// A JSON null in a jsonb column would be stored as the jsonb value null, not SQL NULL: leave it out.
	return JSON.stringify(
		rows.map((r) => ({
			resolution_s: r.resolution_s,
			bucket_t: r.bucket_t,
			frames: r.frames,
			first_seq: r.firstSeq,
			last_seq: r.lastSeq,
			window_s: r.window_s,
			shots: r.shots,
			vacuum: r.vacuum,
			counts: r.counts,
			switches: r.switches,
			dwell_s: r.dwell_s,
			escapes: r.escapes,
			vacuum_s: r.vacuum_s,
			transitions: r.transitions ?? undefined,
			lock_min: r.lockMin,
			lock_sum: r.lockSum,
			lock_max: r.lockMax,
			aux: r.aux,
			expected_switches: r.expectedSwitches,
			expected_escapes: r.expectedEscapes
		}))
	);
}

/** The run row's UPDATE, when the writer's progress is due to be written (not with every commit). */
export function progressUpdate(runId: string, p: RunProgressFields) {
	return sql`UPDATE runs SET last_seq = ${p.lastSeq}, last_frame_t = ${p.lastFrameT}::bigint,
		last_frame_at = ${p.lastFrameAt?.toISOString() ?? null}::timestamptz, last_lock = ${p.lastLock}::float8,
		frame_count = ${p.frameCount}, gap_count = ${p.gapCount}
		WHERE id = ${runId}`;
}

/**
 * Stores the frames (a seq already stored is skipped), replaces the given rollup rows, and, when
 * `progress` is given, writes the run's progress; returns the seqs actually stored. At most
 * ROLLUP_ROWS_PER_STATEMENT rollup rows.
 */
export async function writeBatch(
	db: Tx | Db,
	runId: string,
	receivedAt: Date,
	batch: readonly FrameToStore[],
	rollups: readonly Rollup[],
	progress: RunProgressFields | null
): Promise<Set<number>> {
	if (rollups.length > ROLLUP_ROWS_PER_STATEMENT) throw new RangeError(`writeBatch: at most ${ROLLUP_ROWS_PER_STATEMENT} rollup rows`);
	const result = await db.execute<{ seq: number }>(sql`
		WITH stored AS (
			INSERT INTO frames (run_id, seq, t, window_s, shots, vacuum, counts, lock, switches, dwell_s, escapes, vacuum_s,
				transitions, amp, aux, iq, created_at, late)
			SELECT ${runId}, x.seq, x.t, x.window_s, x.shots, x.vacuum, x.counts, x.lock, x.switches, x.dwell_s, x.escapes,
				x.vacuum_s, x.transitions, x.amp, x.aux, x.iq, ${receivedAt.toISOString()}::timestamptz, x.late
			FROM jsonb_to_recordset(${framesJson(batch)}::jsonb) AS x(seq integer, t bigint, window_s float8, shots integer,
				vacuum integer, counts jsonb, lock float8, switches integer, dwell_s float8, escapes integer, vacuum_s float8,
				transitions jsonb, amp float8, aux jsonb, iq jsonb, late boolean)
			ON CONFLICT (run_id, seq) DO NOTHING
			RETURNING seq
		), rolled AS (
			INSERT INTO frame_rollups (run_id, resolution_s, bucket_t, frames, first_seq, last_seq, window_s, shots, vacuum,
				counts, switches, dwell_s, escapes, vacuum_s, transitions, lock_min, lock_sum, lock_max, aux,
				expected_switches, expected_escapes)
			SELECT ${runId}, r.resolution_s, r.bucket_t, r.frames, r.first_seq, r.last_seq, r.window_s, r.shots, r.vacuum,
				r.counts, r.switches, r.dwell_s, r.escapes, r.vacuum_s, r.transitions, r.lock_min, r.lock_sum, r.lock_max, r.aux,
				r.expected_switches, r.expected_escapes
			FROM jsonb_to_recordset(${rollupsJson(rollups)}::jsonb) AS r(resolution_s integer, bucket_t bigint, frames integer,
				first_seq integer, last_seq integer, window_s float8, shots bigint, vacuum bigint, counts jsonb, switches bigint,
				dwell_s float8, escapes bigint, vacuum_s float8, transitions jsonb, lock_min float8, lock_sum float8,
				lock_max float8, aux jsonb, expected_switches float8, expected_escapes float8)
			ON CONFLICT (run_id, resolution_s, bucket_t) DO UPDATE SET frames = excluded.frames,
				first_seq = excluded.first_seq, last_seq = excluded.last_seq, window_s = excluded.window_s,
				shots = excluded.shots, vacuum = excluded.vacuum, counts = excluded.counts, switches = excluded.switches,
				dwell_s = excluded.dwell_s, escapes = excluded.escapes, vacuum_s = excluded.vacuum_s,
				transitions = excluded.transitions, lock_min = excluded.lock_min, lock_sum = excluded.lock_sum,
				lock_max = excluded.lock_max, aux = excluded.aux, expected_switches = excluded.expected_switches,
				expected_escapes = excluded.expected_escapes
			RETURNING 1
		)${progress ? sql`, progressed AS (${progressUpdate(runId, progress)} RETURNING 1)` : sql``}
		SELECT seq FROM stored`);
	return new Set(result.rows.map((r) => Number(r.seq)));
}
