// Converts between wire frames and rows of the frames table.
import type { Frame } from '../../protocol/frame';
import type { frames } from '../db/schema';

type FrameRow = typeof frames.$inferSelect;
type FrameInsert = typeof frames.$inferInsert;

export function frameToRow(runId: string, f: Frame): FrameInsert {
	return {
		runId,
		seq: f.seq,
		t: Math.round(f.t),
		windowS: f.window_s,
		shots: f.shots,
		vacuum: f.vacuum,
		counts: f.counts,
		lock: f.lock,
		switches: f.switches,
		dwellS: f.dwell_s,
		escapes: f.escapes,
		vacuumS: f.vacuum_s,
		transitions: f.transitions ?? null,
		amp: f.amp ?? null,
		aux: f.aux ?? null,
		iq: f.iq ?? null
	};
}

/** A stored frame in the wire format (optional fields only when present). */
export function rowToFrame(r: Pick<FrameRow, Exclude<keyof FrameRow, 'runId' | 'receivedAt' | 'late'>>): Frame {
	const frame: Frame = {
		seq: r.seq,
		t: r.t,
		window_s: r.windowS,
		shots: r.shots,
		vacuum: r.vacuum,
		counts: r.counts,
		lock: r.lock,
		switches: r.switches,
		dwell_s: r.dwellS,
		escapes: r.escapes,
		vacuum_s: r.vacuumS
	};
	if (r.transitions) frame.transitions = r.transitions;
	if (r.amp !== null) frame.amp = r.amp;
	if (r.aux) frame.aux = r.aux;
	if (r.iq) frame.iq = r.iq;
	return frame;
}
