// The contract between the engine and one detector: plain-JSON state in, signals out.
import type { z } from 'zod';
import type { Frame } from '../protocol/frame';
import type { Signal } from './events';
import type { FrameExpectation } from './expected';
import type { DetectorRules, RuleKind } from './rules';
import type { ParsedRunInfo } from './run-info';

export type { RunInfo, ParsedRunInfo } from './run-info';

export type DetectorContext<K extends RuleKind> = {
	rule: DetectorRules[K];
	run: ParsedRunInfo;
	/**
	 * The window's expected counts from the run's rate models (frames only; computed once per
	 * frame by the engine). A process without a model is null: rate-based detectors stay idle.
	 */
	expected?: FrameExpectation;
	/** Whether the engine holds an open condition of this detector's kind (and key). */
	isOpen(key?: string): boolean;
};

/**
 * A detector keeps its memory in a plain-JSON state object that it may change in place; the engine
 * owns that object, snapshots it, and decides whether each signal becomes an event. Detectors must
 * not read any clock or random source: everything they know comes in through the arguments.
 */
export type Detector<K extends RuleKind, S> = {
	kind: K;
	stateSchema: z.ZodType<S>;
	init(run: ParsedRunInfo): S;
	/** `receivedAt_ms` is the server clock at receipt when known (live), else absent (replay). */
	onFrame?(state: S, frame: Frame, ctx: DetectorContext<K>, receivedAt_ms: number | undefined): Signal[];
	onClock?(state: S, now_ms: number, ctx: DetectorContext<K>): Signal[];
	/** The run ended: signals for conditions that cannot last past the end. */
	onEnd?(state: S, at_ms: number, ctx: DetectorContext<K>): Signal[];
	/** The rule changed; the new thresholds apply from the next frame. */
	onRuleChange?(state: S, previous: DetectorRules[K], next: DetectorRules[K]): void;
	/**
	 * The run's rate models or nominal temperature changed (ctx carries the new ones); designs
	 * made from the old ones are redone, and conditions that can no longer be judged may clear.
	 */
	onRunChange?(state: S, at_ms: number, ctx: DetectorContext<K>): Signal[];
};
