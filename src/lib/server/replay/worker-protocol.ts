// Messages between the replay service (main thread) and the replay worker thread.
import type { Frame } from '../../protocol/frame';
import type { ReplayerOptions, ReplayIncident } from '../../detect/replay';
import type { RunInfo } from '../../detect/run-info';

/** Marks a worker started for a replay, so loading the entry module elsewhere does nothing. */
export const REPLAY_WORKER_ROLE = 'phasewarden.replay';

/** Given to the worker at start (workerData). */
export interface ReplayWorkerData {
	role: typeof REPLAY_WORKER_ROLE;
	rules: unknown;
	run: RunInfo;
	options: ReplayerOptions;
}

/** A page of stored frames in seq order, with the server clock at receipt of each. */
export interface FramePage {
	frames: Frame[];
	receivedAt_ms: (number | undefined)[];
}

export type ToReplayWorker = ({ type: 'frames' } & FramePage) | { type: 'finish'; endedAt_ms?: number };

export type FromReplayWorker =
	/** A page went through the engine; `frames` counts all pushed so far. */
	| { type: 'pushed'; frames: number }
	| { type: 'done'; frameCount: number; incidents: ReplayIncident[] }
	/** `name` lets the caller rebuild a RangeError (rules that do not fit the run: a 400); `rule` is a refused rule's field. */
	| { type: 'error'; name: string; message: string; rule?: { path: string[]; problem: string } };
