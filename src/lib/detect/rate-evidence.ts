// Pieces of evidence that the rate-based detectors share: the rate model used and window spans.
import type { JsonValue } from './events';
import type { ParsedRunInfo } from './run-info';
import type { RateProcess } from './expected';

/** The model a prediction came from, as the incident records it. */
export function rateModelEvidence(run: ParsedRunInfo, process: RateProcess): { [key: string]: JsonValue } | null {
	const m = run.rateModels?.[process];
	if (!m) return null;
	return {
		process: m.process,
		W0_per_s: m.W0_per_s,
		A: m.A,
		mode_GHz: m.mode_GHz,
		nominal_mK: run.nominal_mK ?? m.nominal_mK,
		source: m.source
	};
}

/** JSON has no infinity: an unbounded value is recorded as null. */
export const finiteOrNull = (x: number): number | null => (Number.isFinite(x) ? x : null);

/** Significant digits for summaries. */
export function fmt(x: number, digits = 3): string {
	if (!Number.isFinite(x)) return x > 0 ? '∞' : '−∞';
	if (x === 0) return '0';
	return Number(x.toPrecision(digits)).toString();
}

/** A p-value for a summary: "p = 3.1e-9". */
export function fmtP(p: number): string {
	return p < 1e-3 ? `p = ${p.toExponential(1)}` : `p = ${fmt(p, 2)}`;
}
