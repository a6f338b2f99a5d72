// Lost data in a span: the seq ranges the agent never delivered, placed in agent time by the
// stored frames either side of each gap. The lost time is the stretch between those two frames
// less the window of the frame before (a frame's window ends where the next begins).

export type GapWithNeighbours = {
	fromSeq: number;
	toSeq: number;
	/** Agent time (ms) and window of the stored frame just before the gap; null when not stored. */
	before: { t_ms: number; window_s: number } | null;
	/** Agent time (ms) of the stored frame just after the gap; null when not stored (yet). */
	after_t_ms: number | null;
};

export type LostStretch = { fromSeq: number; toSeq: number; frames: number; from_ms: number; to_ms: number; seconds: number };
export type LostData = { frames: number; seconds: number; stretches: LostStretch[] };

/**
 * The gaps that overlap [from_ms, to_ms); seconds are clipped to the span, frames are the whole
 * gap's missing seqs. A gap whose neighbours are not stored cannot be placed in time and is left out.
 */
export function lostData(gaps: readonly GapWithNeighbours[], from_ms: number, to_ms: number): LostData {
	const stretches: LostStretch[] = [];
	for (const g of gaps) {
		if (g.toSeq < g.fromSeq) throw new RangeError(`lost data: gap ${g.fromSeq}–${g.toSeq} ends before it starts`);
		if (!g.before || g.after_t_ms === null) continue;
		const start = g.before.t_ms + g.before.window_s * 1000;
		const end = Math.max(start, g.after_t_ms);
		const overlaps = end > start ? start < to_ms && end > from_ms : start >= from_ms && start < to_ms;
		if (!overlaps) continue;
		const a = Math.max(start, from_ms);
		const b = Math.min(end, to_ms);
		stretches.push({ fromSeq: g.fromSeq, toSeq: g.toSeq, frames: g.toSeq - g.fromSeq + 1, from_ms: a, to_ms: b, seconds: (b - a) / 1000 });
	}
	stretches.sort((x, y) => x.from_ms - y.from_ms);
	return {
		frames: stretches.reduce((n, s) => n + s.frames, 0),
		seconds: stretches.reduce((n, s) => n + s.seconds, 0),
		stretches
	};
}
