// The phase-space picture's data as the server sends it (GET /api/runs/:id/iq and the page loaders).
import type { IqSum, Lobe } from './histogram';

export type RunIq = {
	/** The span asked for (agent clock, ms). */
	from_ms: number;
	to_ms: number;
	/** The first and last frame found in it; null when none. */
	firstFrame_ms: number | null;
	lastFrame_ms: number | null;
	states: number;
	/** Frames in the span that carry a histogram, and every how many of them were added. */
	framesWithIq: number;
	sampledEvery: number;
	sum: IqSum | null;
	lobes: Lobe[];
	/** Phase-state occupancy over the same frames, for the bars beside the picture. */
	occupancy: { counts: number[]; vacuum: number; shots: number; fromSeq: number | null; toSeq: number | null };
};
