// aux_limit: named aux values (mixing-chamber temperature, pump power, bias…) outside limits set
// per setup, for N consecutive windows; clears with hysteresis after M windows back inside.
//
// One condition per aux name (key = the name). A frame without that aux value carries no
// information about it: it neither extends nor breaks a streak. A limit removed from the rules
// while its condition is open clears it at the next frame.
import { z } from 'zod';
import type { Detector } from './detector';
import type { Evidence, Signal } from './events';
import type { AuxLimit, AuxLimitRule } from './rules';
import type { Frame } from '../protocol/frame';
import { fmt } from './rate-evidence';

/** Evidence lists at most this many windows (the newest). */
export const AUX_EVIDENCE_WINDOWS = 20;

const sampleSchema = z.object({ seq: z.number().int(), t_ms: z.number(), value: z.number() });
type Sample = z.infer<typeof sampleSchema>;

const nameStateSchema = z.object({
	/** Consecutive windows out of limits (closed) or back inside (open). */
	streak: z.number().int().min(0),
	recent: z.array(sampleSchema),
	/** The value furthest outside since the condition opened. */
	worst: sampleSchema.nullable(),
	/** Which side opened it. */
	side: z.enum(['above', 'below']).nullable()
});
type NameState = z.infer<typeof nameStateSchema>;

const auxLimitStateSchema = z.object({ names: z.record(z.string(), nameStateSchema) });
export type AuxLimitState = z.infer<typeof auxLimitStateSchema>;

const fresh = (): NameState => ({ streak: 0, recent: [], worst: null, side: null });

function push(ns: NameState, sample: Sample): void {
	ns.streak += 1;
	ns.recent.push(sample);
	if (ns.recent.length > AUX_EVIDENCE_WINDOWS) ns.recent.shift();
}

function outside(limit: AuxLimit, value: number): 'above' | 'below' | null {
	if (limit.above !== undefined && value > limit.above) return 'above';
	if (limit.below !== undefined && value < limit.below) return 'below';
	return null;
}

/** Back inside the clearing bounds (hysteresis): at or below clearBelow, at or above clearAbove. */
function inside(limit: AuxLimit, value: number): boolean {
	const top = limit.clearBelow ?? limit.above;
	const bottom = limit.clearAbove ?? limit.below;
	return (top === undefined || value <= top) && (bottom === undefined || value >= bottom);
}

function ruleEvidence(rule: AuxLimitRule, limit: AuxLimit | undefined): Evidence {
	return { rule: 'aux_limit', version: rule.version, limit: limit ? { ...limit } : null };
}

const bound = (limit: AuxLimit, side: 'above' | 'below') => (side === 'above' ? `above ${limit.above}` : `below ${limit.below}`);

export const auxLimit: Detector<'aux_limit', AuxLimitState> = {
	kind: 'aux_limit',
	stateSchema: auxLimitStateSchema,

	init: () => ({ names: {} }),

	onFrame(state, frame, { rule, isOpen }): Signal[] {
		const signals: Signal[] = [];
		for (const name of Object.keys(state.names)) {
			if (rule.limits.some((l) => l.name === name)) continue;
			delete state.names[name];
			if (isOpen(name)) {
				signals.push({
					type: 'clear',
					key: name,
					at_ms: frame.t,
					seq: frame.seq,
					summary: `The limit on ${name} was removed; it is no longer watched`,
					evidence: { ...ruleEvidence(rule, undefined), name, reason: 'limit_removed' }
				});
			}
		}
		for (const limit of rule.limits) {
			const value = frame.aux?.[limit.name];
			if (typeof value !== 'number' || !Number.isFinite(value)) continue;
			const ns = (state.names[limit.name] ??= fresh());
			const signal = onValue(ns, limit, rule, frame, value, isOpen(limit.name));
			if (signal) signals.push(signal);
		}
		return signals;
	},

	onRuleChange(state) {
		// Streaks were counted against the old limits; count afresh under the new ones.
		for (const ns of Object.values(state.names)) {
			ns.streak = 0;
			ns.recent = [];
		}
	}
};

function onValue(ns: NameState, limit: AuxLimit, rule: AuxLimitRule, frame: Frame, value: number, open: boolean): Signal | null {
	const sample = { seq: frame.seq, t_ms: frame.t, value };
	if (!open) {
		const side = outside(limit, value);
		if (side === null || (ns.side !== null && ns.side !== side)) {
			// A streak is on one side: crossing from above to below starts it afresh.
			Object.assign(ns, fresh());
			if (side === null) return null;
		}
		ns.side = side;
		push(ns, sample);
		if (ns.streak < limit.windows) return null;
		const values = [...ns.recent];
		ns.worst = values.reduce((a, b) => (side === 'above' ? (b.value > a.value ? b : a) : b.value < a.value ? b : a));
		ns.streak = 0;
		ns.recent = [];
		return {
			type: 'open',
			key: limit.name,
			severity: limit.severity,
			at_ms: frame.t,
			seq: frame.seq,
			summary: `${limit.name} ${bound(limit, side)} for ${limit.windows} consecutive windows (last ${fmt(value, 4)} at seq ${frame.seq})`,
			evidence: { ...ruleEvidence(rule, limit), name: limit.name, side, count: limit.windows, values }
		};
	}
	const side = ns.side ?? outside(limit, value) ?? 'above';
	if (!inside(limit, value)) {
		ns.streak = 0;
		ns.recent = [];
		const further = ns.worst === null || (side === 'above' ? value > ns.worst.value : value < ns.worst.value);
		if (!further) return null;
		ns.worst = sample;
		return {
			type: 'update',
			key: limit.name,
			at_ms: frame.t,
			seq: frame.seq,
			evidence: { ...ruleEvidence(rule, limit), name: limit.name, side, worst: sample }
		};
	}
	push(ns, sample);
	if (ns.streak < limit.clearWindows) return null;
	const values = [...ns.recent];
	const worst = ns.worst;
	Object.assign(ns, fresh());
	return {
		type: 'clear',
		key: limit.name,
		at_ms: frame.t,
		seq: frame.seq,
		summary: `${limit.name} back inside its limits for ${limit.clearWindows} consecutive windows`,
		evidence: { ...ruleEvidence(rule, limit), name: limit.name, side, count: limit.clearWindows, values, worst }
	};
}
