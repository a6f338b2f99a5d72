// The false-alarm budget of a statistical rule, turned into the level of each test on each window.
//
// A budget of one false alarm per D days is a rate: a window of window_s seconds may spend
// α_window = window_s / (D·86 400 s) of it, so the budget holds whatever the frame rate and a
// long window spends proportionally more. When a detector runs several tests on one window (a
// single-window and a horizon test, switches and escapes) it divides α_window equally among the
// tests it actually runs on that window (Bonferroni): by the union bound the probability that any
// of them fires falsely on that window is at most α_window, however the tests are correlated, and
// so the expected number of false openings over a run is at most the sum of α_window over its
// windows — one per D days. Overlapping horizons make consecutive tests strongly correlated, so
// the true rate lies well below the bound; that is the price of a bound that needs no model of
// the correlation.

export const SECONDS_PER_DAY = 86_400;

/** α of one window; capped at 0.5 so that a window longer than half the budget still tests something. */
export function windowAlpha(window_s: number, falseAlarmEvery_days: number): number {
	return Math.min(0.5, window_s / (falseAlarmEvery_days * SECONDS_PER_DAY));
}

/** The budget in windows of the given length: the in-control run length a chart should reach. */
export function budgetWindows(window_s: number, falseAlarmEvery_days: number): number {
	return (falseAlarmEvery_days * SECONDS_PER_DAY) / window_s;
}
