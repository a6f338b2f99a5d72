// The status vocabulary: every state has a word, a shape and a tone, so none depends on colour.
import type { IncidentState, Run, Severity } from './types';

export type Shape =
	| 'dot'
	| 'ring'
	| 'square'
	| 'diamond'
	| 'half-diamond'
	| 'check'
	| 'triangle'
	| 'triangle-outline'
	| 'circle-i'
	| 'bars-3'
	| 'bars-2'
	| 'bars-1'
	| 'bars-0';
export type Tone = 'steady' | 'caution' | 'alarm' | 'accent' | 'muted';

export interface StatusLook {
	word: string;
	shape: Shape;
	tone: Tone;
	/** Longer wording for screen readers and tooltips. */
	hint: string;
}

/** Seconds without a frame after which an open run reads as quiet (the agent_silent default is 60 s). */
export const QUIET_AFTER_S = 30;

export type RunLiveness = 'live' | 'quiet' | 'waiting' | 'ended';

export function runLiveness(run: Pick<Run, 'status' | 'lastFrameAt'>, now: number = Date.now()): RunLiveness {
	if (run.status === 'ended') return 'ended';
	if (!run.lastFrameAt) return 'waiting';
	const age_s = (now - new Date(run.lastFrameAt).getTime()) / 1000;
	return age_s > QUIET_AFTER_S ? 'quiet' : 'live';
}

export const RUN_LOOK: Record<RunLiveness, StatusLook> = {
	live: { word: 'Live', shape: 'dot', tone: 'steady', hint: 'Run open, frames arriving' },
	quiet: { word: 'Quiet', shape: 'ring', tone: 'caution', hint: 'Run open, but no recent frame' },
	waiting: { word: 'Waiting', shape: 'ring', tone: 'muted', hint: 'Run open, no frame received yet' },
	ended: { word: 'Ended', shape: 'square', tone: 'muted', hint: 'Run ended' }
};

export const INCIDENT_LOOK: Record<IncidentState, StatusLook> = {
	open: { word: 'Open', shape: 'diamond', tone: 'alarm', hint: 'Open: nobody has acknowledged it yet' },
	acknowledged: { word: 'Acknowledged', shape: 'half-diamond', tone: 'caution', hint: 'Acknowledged: someone is on it' },
	resolved: { word: 'Resolved', shape: 'check', tone: 'steady', hint: 'Resolved' }
};

export const SEVERITY_LOOK: Record<Severity, StatusLook> = {
	critical: { word: 'Critical', shape: 'triangle', tone: 'alarm', hint: 'Critical severity' },
	warning: { word: 'Warning', shape: 'triangle-outline', tone: 'caution', hint: 'Warning severity' },
	info: { word: 'Info', shape: 'circle-i', tone: 'accent', hint: 'For information' }
};

/** Lock-quality bands: below the lock_lost threshold (0.5 by default) it is unlocked; above the clearing level (0.7) locked. */
export function lockLook(lock: number | null | undefined, threshold = 0.5, clear = 0.7): StatusLook {
	if (lock == null || !Number.isFinite(lock)) return { word: 'No data', shape: 'bars-0', tone: 'muted', hint: 'No lock value yet' };
	if (lock < threshold) return { word: 'Unlocked', shape: 'bars-1', tone: 'alarm', hint: `Lock quality below ${threshold}` };
	if (lock < clear) return { word: 'Weak', shape: 'bars-2', tone: 'caution', hint: `Lock quality between ${threshold} and ${clear}` };
	return { word: 'Locked', shape: 'bars-3', tone: 'steady', hint: `Lock quality at or above ${clear}` };
}

export function feedLook(status: 'connecting' | 'live' | 'retrying' | 'closed'): StatusLook {
	switch (status) {
		case 'live':
			return { word: 'Streaming', shape: 'dot', tone: 'steady', hint: 'Live updates connected' };
		case 'connecting':
			return { word: 'Connecting', shape: 'ring', tone: 'muted', hint: 'Connecting to live updates' };
		case 'retrying':
			return { word: 'Reconnecting', shape: 'ring', tone: 'caution', hint: 'Live updates interrupted, reconnecting' };
		default:
			return { word: 'Paused', shape: 'square', tone: 'muted', hint: 'Live updates closed' };
	}
}
