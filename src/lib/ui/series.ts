// Client-side views of a run's frames: merged windows, switching rate, rolling mean, occupancy, gaps.
import type { Frame, Occupancy } from './types';

/** How many frames a live page keeps in memory (the API's default history). */
export const FRAME_CAP = 600;

/**
 * Adds newly arrived frames to the ones already shown: sorted by seq, each seq once (a resend
 * after a reconnect replaces nothing twice), and only the newest `cap` kept.
 */
export function mergeFrames(existing: readonly Frame[], incoming: readonly Frame[], cap = FRAME_CAP): Frame[] {
	if (incoming.length === 0) return existing.slice(-cap);
	const last = existing.length ? existing[existing.length - 1].seq : 0;
	const ordered = incoming.every((f, i) => f.seq > (i === 0 ? last : incoming[i - 1].seq));
	let merged: Frame[];
	if (ordered) {
		merged = existing.concat(incoming);
	} else {
		const bySeq = new Map<number, Frame>();
		for (const f of existing) bySeq.set(f.seq, f);
		for (const f of incoming) bySeq.set(f.seq, f);
		merged = [...bySeq.values()].sort((a, b) => a.seq - b.seq);
	}
	return merged.length > cap ? merged.slice(merged.length - cap) : merged;
}

/** Switches per second of time spent in phase states; null when the window had no such time. */
export function switchingRate_per_s(frame: Pick<Frame, 'switches' | 'dwell_s'>): number | null {
	return frame.dwell_s > 0 ? frame.switches / frame.dwell_s : null;
}

/**
 * Trailing mean of the last `n` defined values at each index (nulls are skipped, not zero).
 * Returns null where no value is defined yet.
 */
export function rollingMean(values: readonly (number | null)[], n: number): (number | null)[] {
	if (!Number.isInteger(n) || n < 1) throw new RangeError(`window must be a positive integer, got ${n}`);
	const out: (number | null)[] = [];
	let sum = 0;
	let count = 0;
	for (let i = 0; i < values.length; i++) {
		const v = values[i];
		if (v != null) {
			sum += v;
			count += 1;
		}
		const drop = i - n >= 0 ? values[i - n] : null;
		if (drop != null) {
			sum -= drop;
			count -= 1;
		}
		out.push(count > 0 ? sum / count : null);
	}
	return out;
}

/**
 * Pooled switching rate over the same trailing windows: total switches over total dwell time,
 * which weights each window by its exposure (the estimate a counting process calls for).
 */
export function pooledRate_per_s(frames: readonly Pick<Frame, 'switches' | 'dwell_s'>[], n: number): (number | null)[] {
	if (!Number.isInteger(n) || n < 1) throw new RangeError(`window must be a positive integer, got ${n}`);
	const out: (number | null)[] = [];
	let switches = 0;
	let dwell = 0;
	for (let i = 0; i < frames.length; i++) {
		switches += frames[i].switches;
		dwell += frames[i].dwell_s;
		if (i - n >= 0) {
			switches -= frames[i - n].switches;
			dwell -= frames[i - n].dwell_s;
		}
		out.push(dwell > 1e-12 ? switches / dwell : null);
	}
	return out;
}

/** Sum of phase-state counts over the newest `windows` frames (same shape as the run JSON's occupancy). */
export function occupancyFromFrames(frames: readonly Frame[], K: number, windows = 60): Occupancy | null {
	const recent = frames.slice(-windows);
	if (recent.length === 0) return null;
	const counts = new Array<number>(K).fill(0);
	let vacuum = 0;
	let shots = 0;
	for (const f of recent) {
		for (let i = 0; i < K; i++) counts[i] += f.counts[i] ?? 0;
		vacuum += f.vacuum;
		shots += f.shots;
	}
	return { counts, vacuum, shots, fromSeq: recent[0].seq, toSeq: recent[recent.length - 1].seq };
}

/** Seq ranges missing between consecutive loaded frames (lost data, or not yet delivered). */
export function missingRanges(frames: readonly Pick<Frame, 'seq'>[]): { fromSeq: number; toSeq: number }[] {
	const out: { fromSeq: number; toSeq: number }[] = [];
	for (let i = 1; i < frames.length; i++) {
		const prev = frames[i - 1].seq;
		const cur = frames[i].seq;
		if (cur > prev + 1) out.push({ fromSeq: prev + 1, toSeq: cur - 1 });
	}
	return out;
}

/** Agent-clock time span [start, end] in ms covered by a seq range, read from the frames around it. */
export function gapSpan_ms(
	frames: readonly Pick<Frame, 'seq' | 't' | 'window_s'>[],
	gap: { fromSeq: number; toSeq: number }
): [number, number] | null {
	let before: Pick<Frame, 'seq' | 't' | 'window_s'> | undefined;
	let after: Pick<Frame, 'seq' | 't' | 'window_s'> | undefined;
	for (const f of frames) {
		if (f.seq < gap.fromSeq) before = f;
		else if (f.seq > gap.toSeq) {
			after = f;
			break;
		}
	}
	if (!before || !after) return null;
	// The gap starts where the window before it ended, and ends where the window after it began.
	return [before.t, after.t - after.window_s * 1000];
}
