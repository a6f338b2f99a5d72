// lock_lost: phase-lock quality below a threshold for N consecutive windows; clears with hysteresis.
//
// A window with no shots in any phase state (sum(counts) = 0) carries no lock information: its
// `lock` is whatever the agent writes for an empty average. Such a window neither extends nor
// resets a streak, so a stretch of vacuum-only windows inside a lock loss does not hide it, and
// a single empty window does not break a recovery. A gap in seq (windows the agent never
// delivered) is treated the same way: the missing windows are unknown, not low and not good.
import { z } from 'zod';
import type { Frame } from '../protocol/frame';
import type { Detector } from './detector';
import type { Evidence, Signal } from './events';
import type { LockLostRule } from './rules';

/** Evidence lists at most this many windows (the newest), whatever the rule's window count. */
export const LOCK_EVIDENCE_WINDOWS = 20;

const sampleSchema = z.object({ seq: z.number().int(), t_ms: z.number(), lock: z.number() });
type LockSample = z.infer<typeof sampleSchema>;

const streakSchema = z.object({
	/** Informative windows in the streak. */
	count: z.number().int().min(0),
	/** Empty windows (no shots in phase states) passed over inside the streak. */
	skipped: z.number().int().min(0),
	/** The newest windows of the streak, oldest first. */
	recent: z.array(sampleSchema)
});
type Streak = z.infer<typeof streakSchema>;

const lockLostStateSchema = z.object({
	low: streakSchema,
	good: streakSchema,
	/** Lowest lock seen since the condition opened. */
	worst: sampleSchema.nullable(),
	/** Informative windows since the condition opened. */
	windowsOpen: z.number().int().min(0)
});
export type LockLostState = z.infer<typeof lockLostStateSchema>;

const emptyStreak = (): Streak => ({ count: 0, skipped: 0, recent: [] });

function extend(streak: Streak, sample: LockSample): void {
	streak.count += 1;
	streak.recent.push(sample);
	if (streak.recent.length > LOCK_EVIDENCE_WINDOWS) streak.recent.shift();
}

export function hasPhaseShots(frame: Pick<Frame, 'counts'>): boolean {
	return frame.counts.some((c) => c > 0);
}

function ruleEvidence(rule: LockLostRule): Evidence {
	return {
		rule: 'lock_lost',
		version: rule.version,
		threshold: rule.threshold,
		windows: rule.windows,
		clearThreshold: rule.clearThreshold,
		clearWindows: rule.clearWindows
	};
}

const fmt = (x: number) => x.toFixed(2);

export const lockLost: Detector<'lock_lost', LockLostState> = {
	kind: 'lock_lost',
	stateSchema: lockLostStateSchema,

	init: () => ({ low: emptyStreak(), good: emptyStreak(), worst: null, windowsOpen: 0 }),

	onFrame(state, frame, { rule, isOpen }): Signal[] {
		const streak = isOpen() ? state.good : state.low;
		if (!hasPhaseShots(frame)) {
			if (streak.count > 0) streak.skipped += 1;
			return [];
		}
		const sample = { seq: frame.seq, t_ms: frame.t, lock: frame.lock };

		if (!isOpen()) {
			if (frame.lock >= rule.threshold) {
				state.low = emptyStreak();
				return [];
			}
			extend(state.low, sample);
			if (state.low.count < rule.windows) return [];
			const low = state.low;
			state.good = emptyStreak();
			state.worst = low.recent.reduce((a, b) => (b.lock < a.lock ? b : a));
			state.windowsOpen = 0;
			return [
				{
					type: 'open',
					severity: 'critical',
					at_ms: frame.t,
					seq: frame.seq,
					summary: `Phase lock below ${fmt(rule.threshold)} for ${low.count} consecutive windows (last ${fmt(frame.lock)} at seq ${frame.seq})`,
					evidence: { ...ruleEvidence(rule), count: low.count, skippedWindows: low.skipped, values: [...low.recent] }
				}
			];
		}

		state.windowsOpen += 1;
		if (frame.lock < rule.clearThreshold) {
			state.good = emptyStreak();
			if (state.worst === null || frame.lock < state.worst.lock) {
				state.worst = sample;
				return [
					{
						type: 'update',
						at_ms: frame.t,
						seq: frame.seq,
						evidence: { ...ruleEvidence(rule), lowest: sample, windowsOpen: state.windowsOpen }
					}
				];
			}
			return [];
		}
		extend(state.good, sample);
		if (state.good.count < rule.clearWindows) return [];
		const good = state.good;
		const worst = state.worst;
		const windowsOpen = state.windowsOpen;
		Object.assign(state, lockLost.init({ states: frame.counts.length }));
		return [
			{
				type: 'clear',
				at_ms: frame.t,
				seq: frame.seq,
				summary: `Phase lock back at or above ${fmt(rule.clearThreshold)} for ${good.count} consecutive windows`,
				evidence: {
					...ruleEvidence(rule),
					count: good.count,
					skippedWindows: good.skipped,
					values: [...good.recent],
					lowest: worst,
					windowsOpen
				}
			}
		];
	},

	onRuleChange(state) {
		// Streaks were counted against the old thresholds; count afresh under the new ones.
		state.low = emptyStreak();
		state.good = emptyStreak();
	}
};
