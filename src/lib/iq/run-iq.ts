// The phase-space picture's data as the server sends it (GET /api/runs/:id/iq and the page loaders).
import type { IqSum, Lobe } from './histogram';

export type RunIq = {
	from_ms: number;
	to_ms: number;
	states: number;
	/** Frames in the span that carry a histogram, and every how many of them were added. */
	framesWithIq: number;
	sampledEvery: number;
	sum: IqSum | null;
	lobes: Lobe[];
	/** Phase-state occupancy over the same frames, for the bars beside the picture. */
	occupancy: { counts: number[]; vacuum: number; shots: number; fromSeq: number | null; toSeq: number | null };
};
