// The frame INSERT of the hot path: the whole batch travels as ONE jsonb parameter unpacked by
// jsonb_to_recordset, instead of the query builder's per-row, per-column parameters (which spent
// more CPU building the statement than the database spent storing it). The wire frame's field
// names are the recordset's column names, so a frame is sent as it came.
import { sql } from 'drizzle-orm';
import type { Frame } from '../../protocol/frame';
import type { Db } from '../db';

type Tx = Parameters<Parameters<Db['transaction']>[0]>[0];

export interface FrameToStore {
	frame: Frame;
	/** Arrived after a higher seq (fills a gap); never fed to the detectors. */
	late: boolean;
}

/** Inserts the frames (a seq already stored is skipped) and returns the seqs actually stored. */
export async function insertFrames(tx: Tx | Db, runId: string, receivedAt: Date, batch: readonly FrameToStore[]): Promise<Set<number>> {
	if (batch.length === 0) return new Set();
	const payload = JSON.stringify(batch.map(({ frame, late }) => ({ ...frame, t: Math.round(frame.t), late })));
	const result = await tx.execute<{ seq: number }>(sql`
		INSERT INTO frames (run_id, seq, t, window_s, shots, vacuum, counts, lock, switches, dwell_s, escapes, vacuum_s,
			transitions, amp, aux, iq, created_at, late)
		SELECT ${runId}, x.seq, x.t, x.window_s, x.shots, x.vacuum, x.counts, x.lock, x.switches, x.dwell_s, x.escapes,
			x.vacuum_s, x.transitions, x.amp, x.aux, x.iq, ${receivedAt.toISOString()}::timestamptz, x.late
		FROM jsonb_to_recordset(${payload}::jsonb) AS x(seq integer, t bigint, window_s float8, shots integer,
			vacuum integer, counts jsonb, lock float8, switches integer, dwell_s float8, escapes integer, vacuum_s float8,
			transitions jsonb, amp float8, aux jsonb, iq jsonb, late boolean)
		ON CONFLICT (run_id, seq) DO NOTHING
		RETURNING seq`);
	return new Set(result.rows.map((r) => Number(r.seq)));
}
