// Replay of a stored run through a fresh engine, and the comparison of its incidents with the
// ones that were raised live (for the replay view: what other rules would have raised, and when).
//
// The engine is deterministic, so the same frames, rules and run information give the same
// events. Frame-driven kinds work on the frames' own time and reproduce the live run exactly.
// agent_silent watches the server's clock, which a replay does not have: it is replayed on the
// frames' receipt times when given (else their own `t`), with a clock tick placed exactly when a
// silence reaches the rule's limit, so it opens at the limit rather than at the next tick of a
// live timer (live: up to one tick later).
import type { Frame } from '../protocol/frame';
import { DetectorEngine, type RunChange } from './engine';
import type { DetectorEvent, Evidence, Severity } from './events';
import type { RunInfo } from './run-info';

export type ReplayOptions = {
	/** Server clock at receipt of each frame (live ingest's `receivedAt`), when it was stored. */
	receivedAt_ms?: (frame: Frame, index: number) => number | undefined;
	/** Rule changes during the run, applied after the frame with seq `afterSeq` (in order). */
	ruleChanges?: { afterSeq: number; at_ms: number; rules: unknown }[];
	/** Rate-model changes during the run, applied after the frame with seq `afterSeq` (in order). */
	runChanges?: { afterSeq: number; at_ms: number; change: RunChange }[];
	/** When the run ended (server clock); the engine's end-of-run signals follow the last frame. */
	endedAt_ms?: number;
};

/** Replays frames (in seq order) through a fresh engine with the given rules; returns every event. */
export function replayRun(frames: readonly Frame[], rules: unknown, run: RunInfo, options: ReplayOptions = {}): DetectorEvent[] {
	const replayer = new Replayer(rules, run, options);
	const receivedAt = options.receivedAt_ms ? frames.map((f, i) => options.receivedAt_ms!(f, i)) : undefined;
	const events = replayer.push(frames, receivedAt);
	events.push(...replayer.finish(options.endedAt_ms));
	return events;
}

/** What a Replayer needs besides rules and run: the changes during the run (frames come by push). */
export type ReplayerOptions = Pick<ReplayOptions, 'ruleChanges' | 'runChanges'>;

/**
 * The replay fed a page of frames at a time, so a long run never has to be in memory at once.
 * Pushing the frames in any number of pages, then finishing, gives exactly the events
 * replayRun gives for all of them at once.
 */
export class Replayer {
	readonly #engine: DetectorEngine;
	readonly #ruleChanges: NonNullable<ReplayOptions['ruleChanges']>;
	readonly #runChanges: NonNullable<ReplayOptions['runChanges']>;
	#silenceLimit_ms: number;
	#lastHeard_ms: number | undefined;
	#finished = false;
	/** Frames pushed so far. */
	frameCount = 0;

	constructor(rules: unknown, run: RunInfo, options: ReplayerOptions = {}) {
		this.#engine = new DetectorEngine(rules, run);
		this.#ruleChanges = [...(options.ruleChanges ?? [])];
		this.#runChanges = [...(options.runChanges ?? [])];
		this.#silenceLimit_ms = this.#engine.rules.agent_silent.after_s * 1000;
		this.#lastHeard_ms = run.openedAt_ms;
	}

	/**
	 * Feeds frames (in seq order, after those pushed before); `receivedAt_ms[i]` is the server
	 * clock at receipt of `frames[i]` when stored. Returns the events these frames caused.
	 */
	push(frames: readonly Frame[], receivedAt_ms?: readonly (number | undefined)[]): DetectorEvent[] {
		if (this.#finished) throw new Error('replay: frames pushed after finish');
		const events: DetectorEvent[] = [];
		for (let i = 0; i < frames.length; i++) {
			const frame = frames[i];
			const received = receivedAt_ms?.[i];
			const heard_ms = received ?? frame.t;
			this.#tickUntil(heard_ms, events);
			events.push(...this.#engine.onFrame(frame, received));
			this.#lastHeard_ms = heard_ms;
			while (this.#ruleChanges.length > 0 && this.#ruleChanges[0].afterSeq <= frame.seq) {
				const change = this.#ruleChanges.shift()!;
				events.push(...this.#engine.setRules(change.rules, change.at_ms));
				this.#silenceLimit_ms = this.#engine.rules.agent_silent.after_s * 1000;
			}
			while (this.#runChanges.length > 0 && this.#runChanges[0].afterSeq <= frame.seq) {
				const change = this.#runChanges.shift()!;
				events.push(...this.#engine.setRun(change.change, change.at_ms));
			}
		}
		this.frameCount += frames.length;
		return events;
	}

	/** Ends the replay: with the run's end (server clock), the engine's end-of-run signals. */
	finish(endedAt_ms?: number): DetectorEvent[] {
		if (this.#finished) throw new Error('replay: finished twice');
		this.#finished = true;
		const events: DetectorEvent[] = [];
		if (endedAt_ms !== undefined) {
			this.#tickUntil(endedAt_ms, events);
			events.push(...this.#engine.endRun(endedAt_ms));
		}
		return events;
	}

	/** One tick when the silence reaches the limit, if it does before `now_ms`. */
	#tickUntil(now_ms: number, into: DetectorEvent[]) {
		if (this.#lastHeard_ms !== undefined && now_ms - this.#lastHeard_ms >= this.#silenceLimit_ms) {
			into.push(...this.#engine.onClock(this.#lastHeard_ms + this.#silenceLimit_ms));
		}
	}
}

/** One incident as the replay would have raised it: an open, its updates, and its clear if any. */
export type ReplayIncident = {
	kind: string;
	key: string;
	severity: Severity;
	openedAt_ms: number;
	openedSeq: number | null;
	clearedAt_ms: number | null;
	clearedSeq: number | null;
	summary: string;
	evidence: Evidence;
	updates: number;
	clearSummary: string | null;
};

/** Folds events into incidents, in the order they opened. */
export function replayIncidents(events: readonly DetectorEvent[]): ReplayIncident[] {
	const fold = new IncidentFold();
	fold.add(events);
	return fold.incidents;
}

/** replayIncidents a page of events at a time: a long replay keeps incidents, not every event. */
export class IncidentFold {
	readonly incidents: ReplayIncident[] = [];
	readonly #open = new Map<string, ReplayIncident>();

	add(events: readonly DetectorEvent[]) {
		for (const e of events) {
			const id = `${e.kind}\u0000${e.key ?? ''}`;
			if (e.type === 'open') {
				const incident: ReplayIncident = {
					kind: e.kind,
					key: e.key ?? '',
					severity: e.severity,
					openedAt_ms: e.at_ms,
					openedSeq: e.seq ?? null,
					clearedAt_ms: null,
					clearedSeq: null,
					summary: e.summary,
					evidence: e.evidence,
					updates: 0,
					clearSummary: null
				};
				this.incidents.push(incident);
				this.#open.set(id, incident);
				continue;
			}
			const incident = this.#open.get(id);
			if (!incident) continue;
			if (e.type === 'update') {
				incident.updates += 1;
				continue;
			}
			incident.clearedAt_ms = e.at_ms;
			incident.clearedSeq = e.seq ?? null;
			incident.clearSummary = e.summary;
			this.#open.delete(id);
		}
	}
}

/**
 * An incident raised live, as the server stores it. For frame-driven kinds give the frames' time
 * (`openedT`) as openedAt_ms, so both sides are on the agent's clock; `clearedAt_ms` is when the
 * detector saw the condition end (null while it lasted to the end of the run).
 */
export type ActualIncident = {
	id: string;
	kind: string;
	key?: string | null;
	severity?: string;
	openedAt_ms: number;
	openedSeq?: number | null;
	clearedAt_ms?: number | null;
	summary?: string;
};

export type ReplayComparison = {
	/** Raised both live and in the replay (same kind and key, overlapping in time). */
	both: { actual: ActualIncident; replay: ReplayIncident; openShift_ms: number }[];
	/** The replay would have raised these, and nothing live overlapped them. */
	onlyReplay: ReplayIncident[];
	/** Raised live, but the replay's rules would not have raised them. */
	onlyActual: ActualIncident[];
};

/**
 * Matches live incidents with replayed ones: same kind and key, and overlapping intervals
 * [opened, cleared] (an interval without a clear runs to the end). Each incident matches at most
 * once, earliest first, so the result does not depend on the order the lists come in.
 */
export function compareReplay(
	actual: readonly ActualIncident[],
	replayEvents: readonly DetectorEvent[] | readonly ReplayIncident[]
): ReplayComparison {
	const replay = isIncidentList(replayEvents) ? [...replayEvents] : replayIncidents(replayEvents as readonly DetectorEvent[]);
	const byTime = <T extends { openedAt_ms: number }>(list: readonly T[]) => [...list].sort((a, b) => a.openedAt_ms - b.openedAt_ms);
	const actualSorted = byTime(actual);
	const replaySorted = byTime(replay);
	const used = new Set<ReplayIncident>();
	const both: ReplayComparison['both'] = [];
	const onlyActual: ActualIncident[] = [];
	for (const a of actualSorted) {
		const aEnd = a.clearedAt_ms ?? Infinity;
		const match = replaySorted.find(
			(r) =>
				!used.has(r) &&
				r.kind === a.kind &&
				r.key === (a.key ?? '') &&
				r.openedAt_ms <= aEnd &&
				a.openedAt_ms <= (r.clearedAt_ms ?? Infinity)
		);
		if (match) {
			used.add(match);
			both.push({ actual: a, replay: match, openShift_ms: match.openedAt_ms - a.openedAt_ms });
		} else {
			onlyActual.push(a);
		}
	}
	return { both, onlyReplay: replaySorted.filter((r) => !used.has(r)), onlyActual };
}

function isIncidentList(list: readonly DetectorEvent[] | readonly ReplayIncident[]): list is readonly ReplayIncident[] {
	return list.length > 0 && 'openedAt_ms' in list[0];
}
