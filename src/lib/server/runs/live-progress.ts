// The progress of each run that has a live writer (last seq, last frame, counts). The writer keeps
// it in memory and writes it into the `runs` row at a bounded rate rather than with every commit,
// because that UPDATE was the largest part of a one-frame commit. Reads overlay it, so pages and
// the API still see the newest frame at once; after a crash the next writer recomputes it from the
// stored frames (RunWriter.open), so nothing depends on the row being current.
import type { RunRow } from './service';

export type RunProgressFields = Pick<RunRow, 'lastSeq' | 'lastFrameT' | 'lastFrameAt' | 'lastLock' | 'frameCount' | 'gapCount'>;

const live = new Map<string, RunProgressFields>();

export function rememberProgress(runId: string, progress: RunProgressFields) {
	live.set(runId, progress);
}

export function forgetProgress(runId: string) {
	live.delete(runId);
}

/** The row with its live writer's progress when that is newer than what the row holds. */
export function withLiveProgress<T extends Pick<RunRow, 'id' | 'lastSeq' | 'frameCount'>>(row: T): T {
	const p = live.get(row.id);
	if (!p || (p.lastSeq <= row.lastSeq && p.frameCount <= row.frameCount)) return row;
	return { ...row, ...p };
}
