// The detector engine of one run: feeds frames and clock ticks to every detector, keeps at most one
// open condition per (kind, key), and snapshots all of it as plain JSON so a restarted server
// resumes exactly where it stopped and a replay of stored frames reproduces the live events.
import { z } from 'zod';
import type { Frame } from '../protocol/frame';
import type { Detector, DetectorContext } from './detector';
import type { DetectorEvent, Signal } from './events';
import { acceptSignal, isOpen, type OpenCondition } from './open-set';
import { checkRulesAgainstRun, detectorRulesSchema, parseDetectorRules, RulesRefused, type DetectorRules, type RuleKind } from './rules';
import { parseRunInfo, runInfoSchema, type RunInfo } from './run-info';
import { compileRates, expectFrame, type CompiledRates, type FrameExpectation } from './expected';
import { lockLost } from './lock-lost';
import { agentSilent } from './agent-silent';
import { switchingBurst } from './switching-burst';
import { rateDrift } from './rate-drift';
import { occupancyImbalance } from './occupancy-imbalance';
import { auxLimit } from './aux-limit';
import { detectorStatus, type DetectorStatus, type StatusOptions } from './status';

/** Every detector, in the fixed order that makes the order of events deterministic. */
const DETECTORS = [lockLost, agentSilent, switchingBurst, rateDrift, occupancyImbalance, auxLimit] as const;
type AnyDetector = Detector<RuleKind, unknown>;
const detectors = DETECTORS as unknown as readonly AnyDetector[];

export const SNAPSHOT_FORMAT = 1;

const openConditionSchema: z.ZodType<OpenCondition> = z.object({
	kind: z.string(),
	key: z.string().optional(),
	openedAt_ms: z.number(),
	openedSeq: z.number().int().optional()
});
export type { OpenCondition };

const snapshotSchema = z.object({
	format: z.literal(SNAPSHOT_FORMAT),
	rules: detectorRulesSchema,
	run: runInfoSchema,
	/** Highest seq fed so far (0 before the first frame); older or repeated seqs are ignored. */
	lastSeq: z.number().int().min(0),
	ended: z.boolean(),
	open: z.array(openConditionSchema),
	detectors: z.record(z.string(), z.unknown())
});
export type EngineSnapshot = z.infer<typeof snapshotSchema>;

const json = <T>(value: T): T => JSON.parse(JSON.stringify(value));

function checkRules(rules: DetectorRules, states: number): DetectorRules {
	const problem = checkRulesAgainstRun(rules, states);
	if (problem) throw new RulesRefused(problem.path.split('.'), problem.message);
	return rules;
}

/** The run fields a setup can change while a run is open. */
export type RunChange = Pick<RunInfo, 'rateModels' | 'nominal_mK' | 'operatingPoint'>;

function checkFrame(frame: Frame): void {
	if (!Number.isInteger(frame?.seq) || frame.seq < 1) {
		throw new RangeError(`detector engine: frame.seq must be an integer ≥ 1, got ${String(frame?.seq)}`);
	}
	if (!Number.isFinite(frame.t)) throw new RangeError(`detector engine: frame ${frame.seq}: t must be a finite number`);
	if (!Array.isArray(frame.counts)) throw new RangeError(`detector engine: frame ${frame.seq}: counts must be an array`);
	if (!Number.isFinite(frame.lock)) throw new RangeError(`detector engine: frame ${frame.seq}: lock must be a number`);
}

export class DetectorEngine {
	#s: EngineSnapshot;
	/** Derived from the run information, never stored. */
	#rates: CompiledRates;

	/**
	 * `rules` may be partial: missing rules and fields take their defaults. Without rate models
	 * in `run.rateModels` the rate-based detectors (switching_burst, rate_drift) stay idle.
	 */
	constructor(rules: unknown, run: RunInfo) {
		const parsedRun = parseRunInfo(run);
		this.#rates = compileRates(parsedRun);
		this.#s = {
			format: SNAPSHOT_FORMAT,
			rules: checkRules(parseDetectorRules(rules), parsedRun.states),
			run: parsedRun,
			lastSeq: 0,
			ended: false,
			open: [],
			detectors: Object.fromEntries(detectors.map((d) => [d.kind, d.init(parsedRun)]))
		};
	}

	/** Rebuilds an engine from `snapshot()`'s output (e.g. read back from the database). */
	static restore(snapshot: unknown): DetectorEngine {
		const parsed = snapshotSchema.safeParse(snapshot);
		if (!parsed.success) {
			const issue = parsed.error.issues[0];
			throw new RangeError(`detector snapshot: ${issue.path.map(String).join('.') || '(root)'}: ${issue.message}`);
		}
		const s = json(parsed.data);
		const engine = new DetectorEngine(s.rules, s.run);
		for (const d of detectors) {
			// A snapshot from before a detector existed starts that detector fresh.
			if (!(d.kind in s.detectors)) {
				s.detectors[d.kind] = d.init(s.run);
				continue;
			}
			const state = d.stateSchema.safeParse(s.detectors[d.kind]);
			if (!state.success) {
				const issue = state.error.issues[0];
				throw new RangeError(`detector snapshot: detectors.${d.kind}.${issue.path.map(String).join('.')}: ${issue.message}`);
			}
		}
		engine.#s = s;
		engine.#rates = compileRates(s.run);
		return engine;
	}

	/** A deep copy of the whole state, plain JSON. */
	snapshot(): EngineSnapshot {
		return json(this.#s);
	}

	get rules(): DetectorRules {
		return json(this.#s.rules);
	}

	/** Conditions open now, in the order they opened. */
	openConditions(): OpenCondition[] {
		return json(this.#s.open);
	}

	/**
	 * One frame, in seq order. `receivedAt_ms` is the server clock at receipt (live ingest); leave
	 * it out when replaying stored frames. A seq at or below the last one fed is ignored, so a
	 * resent frame cannot count twice.
	 */
	onFrame(frame: Frame, receivedAt_ms?: number): DetectorEvent[] {
		checkFrame(frame);
		if (frame.seq <= this.#s.lastSeq) return [];
		this.#s.lastSeq = frame.seq;
		const expected = this.#rates.switching || this.#rates.escape ? expectFrame(frame, this.#rates) : undefined;
		return this.#each((d, state, ctx) => d.onFrame?.(state, frame, ctx, receivedAt_ms) ?? [], expected);
	}

	/**
	 * The predicted counts of a window under the run's current rate models, or undefined without
	 * a model. Reads no detector state, so it is the same whether or not the frame is fed.
	 */
	expect(frame: Frame): FrameExpectation | undefined {
		return this.#rates.switching || this.#rates.escape ? expectFrame(frame, this.#rates) : undefined;
	}

	/**
	 * Whether each detector can see, and why not (status.ts), in the fixed order. Reads the state
	 * in place, without copying it, so it is cheap enough to call after every commit.
	 */
	status(options: StatusOptions = {}): DetectorStatus[] {
		return detectorStatus(this.#s, options);
	}

	/** Highest seq fed so far (0 before the first frame). */
	get lastSeq(): number {
		return this.#s.lastSeq;
	}

	/** The run information as the engine holds it (rate models included). */
	get run() {
		return json(this.#s.run);
	}

	/** A tick of the server clock; only clock-driven detectors (agent_silent) look at it. */
	onClock(now_ms: number): DetectorEvent[] {
		if (!Number.isFinite(now_ms)) throw new RangeError('detector engine: now_ms must be a finite number');
		if (this.#s.ended) return [];
		return this.#each((d, state, ctx) => d.onClock?.(state, now_ms, ctx) ?? []);
	}

	/** The run ended: clock-driven conditions clear; the others stay for people to resolve. */
	endRun(at_ms: number): DetectorEvent[] {
		if (this.#s.ended) return [];
		this.#s.ended = true;
		return this.#each((d, state, ctx) => d.onEnd?.(state, at_ms, ctx) ?? []);
	}

	/**
	 * New rules from now on. A rule turned off clears its open conditions (nobody watches them any
	 * more); a changed rule lets its detector restart what it counted under the old thresholds.
	 */
	setRules(rules: unknown, at_ms: number): DetectorEvent[] {
		const next = checkRules(parseDetectorRules(rules), this.#s.run.states);
		const events: DetectorEvent[] = [];
		for (const d of detectors) {
			const before = this.#s.rules[d.kind];
			const after = next[d.kind];
			if (JSON.stringify(before) === JSON.stringify(after)) continue;
			if (before.enabled && !after.enabled) {
				for (const c of this.#s.open.filter((o) => o.kind === d.kind)) {
					events.push({
						type: 'clear',
						kind: d.kind,
						...(c.key === undefined ? {} : { key: c.key }),
						at_ms,
						summary: 'Rule turned off; this condition is no longer watched',
						evidence: { rule: d.kind, version: after.version, reason: 'rule_disabled' }
					});
				}
				this.#s.open = this.#s.open.filter((o) => o.kind !== d.kind);
			}
			d.onRuleChange?.(this.#s.detectors[d.kind], before as never, after as never);
		}
		this.#s.rules = next;
		return events;
	}

	/**
	 * New rate models, nominal temperature or operating point for the run, from the next frame on
	 * (fields left out keep their value; `rateModels: {}` removes the models). Rate-based
	 * detectors start their statistics afresh against the new prediction, and clear conditions
	 * they can no longer judge.
	 */
	setRun(change: RunChange, at_ms: number): DetectorEvent[] {
		const next = parseRunInfo({ ...this.#s.run, ...change });
		// The same facts again (a restarted server re-reads them) change nothing: no restart of statistics.
		if (JSON.stringify(next) === JSON.stringify(parseRunInfo(this.#s.run))) return [];
		const rates = compileRates(next);
		this.#s.run = next;
		this.#rates = rates;
		return this.#each((d, state, ctx) => d.onRunChange?.(state, at_ms, ctx) ?? []);
	}

	/** One context per detector, reused for every call (replay feeds tens of thousands of frames). */
	#contexts = detectors.map((d): DetectorContext<RuleKind> => ({
		rule: undefined as never,
		run: undefined as never,
		expected: undefined,
		isOpen: (key) => isOpen(this.#s.open, d.kind, key)
	}));

	#each(call: (d: AnyDetector, state: unknown, ctx: DetectorContext<RuleKind>) => Signal[], expected?: FrameExpectation): DetectorEvent[] {
		const events: DetectorEvent[] = [];
		for (let i = 0; i < detectors.length; i++) {
			const d = detectors[i];
			const rule = this.#s.rules[d.kind];
			const ctx = this.#contexts[i];
			ctx.rule = rule;
			ctx.run = this.#s.run;
			ctx.expected = expected;
			// Disabled detectors still see every frame, so their memory (e.g. when the agent was
			// last heard) is current when they are turned back on; only their openings are dropped.
			for (const signal of call(d, this.#s.detectors[d.kind], ctx)) {
				const event = acceptSignal(this.#s.open, d.kind, rule.enabled, signal);
				if (event) events.push(event);
			}
		}
		return events;
	}
}

/** Runs frames through a fresh engine and returns every event, in order (for replay and tests). */
export function detectAll(rules: unknown, run: RunInfo, frames: readonly Frame[]): DetectorEvent[] {
	const engine = new DetectorEngine(rules, run);
	return frames.flatMap((f) => engine.onFrame(f));
}
