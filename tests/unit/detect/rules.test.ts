// The rule set: defaults for the new kinds (the detector brief's values), stored rule sets from
// before they existed, and errors that name the bad field.
import { describe, expect, it } from 'vitest';
import { checkRulesAgainstRun, defaultRules, parseDetectorRules, windowAlpha, budgetWindows } from '../../../src/lib/detect';

describe('rules for the statistical detectors', () => {
	it('a stored rule set with only the first two kinds still parses and gets the new defaults', () => {
		const stored = { lock_lost: { threshold: 0.4, version: 3 }, agent_silent: { after_s: 90 } };
		const rules = parseDetectorRules(stored);
		expect(rules.lock_lost.threshold).toBe(0.4);
		expect(rules.switching_burst).toEqual(defaultRules().switching_burst);
		expect(rules.aux_limit.limits).toEqual([
			{ name: 'mxc_mK', above: 30, clearBelow: 28, windows: 3, clearWindows: 3, severity: 'warning' }
		]);
	});

	it('defaults: a budget of one false alarm per 30 days; CUSUM ratios 2 and ½; 60-, 300- and 1800-window horizons; neighbours', () => {
		const r = defaultRules();
		expect(r.switching_burst).toMatchObject({
			falseAlarmEvery_days: 30,
			horizonWindows: 60,
			locked: false,
			clearPValue: 0.01,
			clearWindows: 30
		});
		expect(r.rate_drift).toMatchObject({
			falseAlarmEvery_days: 30,
			ratioUp: 2,
			ratioDown: 0.5,
			prediction: 'temperature',
			processes: ['switching']
		});
		expect(r.occupancy_imbalance).toMatchObject({
			symmetric: 'auto',
			horizonWindows: 1800,
			expectedPairs: 'neighbours',
			maxUnexpectedFraction: 0.25
		});
	});

	it('the budget gives α per window = window_s / (days · 86 400 s), and the chart’s run length in windows', () => {
		expect(windowAlpha(1, 30)).toBeCloseTo(1 / 2_592_000, 18);
		expect(windowAlpha(10, 30)).toBeCloseTo(10 / 2_592_000, 18);
		expect(windowAlpha(1e9, 30)).toBe(0.5);
		expect(budgetWindows(2, 30)).toBe(1_296_000);
	});

	it('bad values name the field', () => {
		expect(() => parseDetectorRules({ rate_drift: { ratioUp: 0.8 } })).toThrow(/rate_drift\.ratioUp: must be greater than 1/);
		expect(() => parseDetectorRules({ rate_drift: { ratioDown: 1 } })).toThrow(/rate_drift\.ratioDown/);
		expect(() => parseDetectorRules({ rate_drift: { processes: ['switching', 'switching'] } })).toThrow(
			/rate_drift\.processes: must not repeat/
		);
		expect(() => parseDetectorRules({ switching_burst: { falseAlarmEvery_days: 0 } })).toThrow(/switching_burst\.falseAlarmEvery_days/);
		expect(() => parseDetectorRules({ switching_burst: { clearPValue: 1 } })).toThrow(/switching_burst\.clearPValue/);
		expect(() => parseDetectorRules({ occupancy_imbalance: { expectedPairs: [[1, 1]] } })).toThrow(
			/expectedPairs\.0: a pair must join two different states/
		);
		expect(() => parseDetectorRules({ occupancy_imbalance: { symmetric: 'yes' } })).toThrow(/occupancy_imbalance\.symmetric/);
		expect(() => parseDetectorRules({ switching_burst: { horizon: 5 } })).toThrow(/switching_burst.*horizon/);
	});

	it('pairs are checked against the run’s number of states', () => {
		const rules = parseDetectorRules({
			occupancy_imbalance: {
				expectedPairs: [
					[0, 1],
					[1, 6]
				]
			}
		});
		expect(checkRulesAgainstRun(rules, 6)).toEqual({
			path: 'occupancy_imbalance.expectedPairs.1.1',
			message: 'state 6 does not exist in a 6-state run (states are 0…5)'
		});
		expect(checkRulesAgainstRun(rules, 7)).toBeNull();
	});
});
