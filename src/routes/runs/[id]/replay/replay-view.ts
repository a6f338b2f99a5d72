// The replay's answer arranged for reading: one lane per incident kind and key, live and replayed
// intervals on the agent's clock, and the three outcomes (both, only the replay, only live).
import type { ReplayIncident } from '$lib/detect/replay';
import type { Incident, Severity } from '$lib/ui/types';
import { clockText, dayMonthText, sameDay, zonedParts } from '$lib/ui/zoned-time';

export type { ReplayIncident };

/** POST /api/runs/:id/replay's answer. */
export interface ReplayResult {
	rules: Record<string, unknown>;
	frameCount: number;
	replayed: ReplayIncident[];
	/** Live incidents; `clearedAt_ms` (agent clock) when the server gives it. */
	actual: (Incident & { clearedAt_ms?: number | null })[];
	comparison: {
		both: { actualId: string; replayIndex: number; openShift_ms: number }[];
		onlyReplay: number[];
		onlyActual: string[];
	};
}

/** GET /api/runs/:id/replay's answer: the signed-in person's replay of the run, if running. */
export interface ReplayProgress {
	running: boolean;
	done: number;
	total: number;
}

/** How far the replay is (0..1), or null when there is nothing to measure yet. */
export function progressFraction(p: ReplayProgress | null): number | null {
	if (!p?.running || !(p.total > 0)) return null;
	return Math.min(1, Math.max(0, p.done / p.total));
}

export type Outcome = 'both' | 'replay' | 'live';

export interface Interval {
	from_ms: number;
	/** null: lasted to the end of the run (or, live, the time it cleared is not known). */
	to_ms: number | null;
	/** Live only: the condition is known to have cleared, at a time the answer does not give. */
	clearedUnknown?: boolean;
	outcome: Outcome;
	severity: Severity;
	label: string;
	seq: number | null;
}

export interface Lane {
	kind: string;
	key: string;
	live: Interval[];
	replay: Interval[];
}

/** Live incidents on the frames' clock: the opening frame's t, else (agent_silent) the server's time. */
export function liveOpen_ms(i: Incident): number {
	return i.openedT ?? new Date(i.openedAt).getTime();
}

function outcomeMaps(result: ReplayResult) {
	const liveOutcome = new Map<string, Outcome>();
	const replayOutcome = new Map<number, Outcome>();
	for (const b of result.comparison.both) {
		liveOutcome.set(b.actualId, 'both');
		replayOutcome.set(b.replayIndex, 'both');
	}
	for (const id of result.comparison.onlyActual) liveOutcome.set(id, 'live');
	for (const i of result.comparison.onlyReplay) replayOutcome.set(i, 'replay');
	return { liveOutcome, replayOutcome };
}

/** Lanes ordered by the order of `kinds` (the rules form's), then by name and key. */
export function lanesOf(result: ReplayResult, kinds: string[]): Lane[] {
	const { liveOutcome, replayOutcome } = outcomeMaps(result);
	const lanes = new Map<string, Lane>();
	const lane = (kind: string, key: string) => {
		const id = `${kind}\u0000${key}`;
		let l = lanes.get(id);
		if (!l) lanes.set(id, (l = { kind, key, live: [], replay: [] }));
		return l;
	};
	for (const a of result.actual) {
		const cleared = typeof a.clearedAt_ms === 'number' ? a.clearedAt_ms : null;
		lane(a.kind, a.key ?? '').live.push({
			from_ms: liveOpen_ms(a),
			to_ms: cleared,
			clearedUnknown: cleared === null && !a.conditionActive,
			outcome: liveOutcome.get(a.id) ?? 'live',
			severity: a.severity,
			label: a.summary,
			seq: a.openedSeq
		});
	}
	result.replayed.forEach((r, i) => {
		lane(r.kind, r.key).replay.push({
			from_ms: r.openedAt_ms,
			to_ms: r.clearedAt_ms,
			outcome: replayOutcome.get(i) ?? 'replay',
			severity: r.severity,
			label: r.summary,
			seq: r.openedSeq
		});
	});
	const rank = (k: string) => {
		const i = kinds.indexOf(k);
		return i === -1 ? kinds.length : i;
	};
	return [...lanes.values()].sort((a, b) => rank(a.kind) - rank(b.kind) || a.kind.localeCompare(b.kind) || a.key.localeCompare(b.key));
}

/** The span the timeline shows: the run's frames, widened to hold every incident. */
export function timeRange(result: ReplayResult, run: { firstT_ms: number | null; lastT_ms: number | null }): [number, number] | null {
	const times: number[] = [];
	if (run.firstT_ms !== null) times.push(run.firstT_ms);
	if (run.lastT_ms !== null) times.push(run.lastT_ms);
	for (const a of result.actual) {
		times.push(liveOpen_ms(a));
		if (typeof a.clearedAt_ms === 'number') times.push(a.clearedAt_ms);
	}
	for (const r of result.replayed) {
		times.push(r.openedAt_ms);
		if (r.clearedAt_ms !== null) times.push(r.clearedAt_ms);
	}
	const finite = times.filter(Number.isFinite);
	if (finite.length === 0) return null;
	const lo = Math.min(...finite);
	const hi = Math.max(...finite);
	return hi > lo ? [lo, hi] : [lo - 30_000, hi + 30_000];
}

export interface OutcomeRows {
	both: { live: ReplayResult['actual'][number]; replay: ReplayIncident; shift_ms: number }[];
	onlyReplay: ReplayIncident[];
	onlyLive: ReplayResult['actual'];
}

export function outcomeRows(result: ReplayResult): OutcomeRows {
	const byId = new Map(result.actual.map((a) => [a.id, a]));
	return {
		both: result.comparison.both
			.map((b) => ({ live: byId.get(b.actualId)!, replay: result.replayed[b.replayIndex], shift_ms: b.openShift_ms }))
			.filter((r) => r.live && r.replay),
		onlyReplay: result.comparison.onlyReplay.map((i) => result.replayed[i]).filter(Boolean),
		onlyLive: result.comparison.onlyActual.map((id) => byId.get(id)!).filter(Boolean)
	};
}

/** "same time", "12 s later", "3 min 05 s earlier": the replay's opening against the live one. */
export function shiftWords(shift_ms: number, formatDuration: (s: number) => string): string {
	if (Math.abs(shift_ms) < 500) return 'at the same time';
	return `${formatDuration(Math.abs(shift_ms) / 1000)} ${shift_ms > 0 ? 'later' : 'earlier'}`;
}

/**
 * A time on the run's clock to the second ("00:53:32"), with the day in front when it is not the
 * day of `ref_ms` (the run's first frame): a replay is read window by window.
 */
export function clockAt(ms: number, ref_ms: number | null): string {
	const p = zonedParts(ms);
	if (ref_ms !== null && sameDay(zonedParts(ref_ms), p)) return clockText(p);
	return `${dayMonthText(p)} ${clockText(p)}`;
}

/** " (seq 32)" or nothing. */
export const seqText = (seq: number | null | undefined) => (seq != null ? ` (seq ${seq})` : '');
