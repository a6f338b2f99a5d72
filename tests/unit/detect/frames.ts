// Hand-built frames for detector tests: a six-state run, one window a second.
import type { Frame } from '../../../src/lib/protocol/frame';

export const K = 6;
export const T0_ms = 1_750_000_000_000;

/** A window at `seq` with the given lock; `shots: 0` makes a window with no phase-state shots. */
export function frame(seq: number, lock: number, opts: { shots?: number; t?: number } = {}): Frame {
	const shots = opts.shots ?? 600;
	const perState = Math.floor(shots / K);
	return {
		seq,
		t: opts.t ?? T0_ms + seq * 1000,
		window_s: 1,
		shots,
		vacuum: shots - perState * K,
		counts: Array.from({ length: K }, () => perState),
		lock,
		switches: 0,
		dwell_s: perState > 0 ? 1 : 0,
		escapes: 0,
		vacuum_s: perState > 0 ? 0 : 1
	};
}

/** Consecutive frames from `firstSeq`, one per lock value. */
export function frames(firstSeq: number, locks: number[]): Frame[] {
	return locks.map((lock, i) => frame(firstSeq + i, lock));
}

export const repeat = (value: number, n: number) => Array.from({ length: n }, () => value);
