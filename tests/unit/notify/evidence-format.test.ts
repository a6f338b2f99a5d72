// Evidence as the alert shows it: labels, units, times in UTC (checked against Date's own ISO form).
import { describe, expect, it } from 'vitest';
import { formatUtc, formatValue, labelFor, viewEvidence } from '../../../src/lib/server/notify/evidence-format';

describe('evidence formatting', () => {
	it('writes epoch milliseconds as UTC time, and other _ms/_s values with their unit', () => {
		const t = Date.UTC(2025, 11, 31, 23, 59, 58, 250);
		expect(formatValue('lastFrameAt_ms', t)).toBe(`${new Date(t).toISOString().slice(0, 10)} 23:59:58.250 UTC`);
		expect(formatUtc(Date.UTC(2025, 0, 1))).toBe('2025-01-01 00:00:00 UTC');
		expect(formatValue('delay_ms', 350)).toBe('350 ms');
		expect(formatValue('silence_s', 90.04)).toBe('90.04 s');
	});

	it('rounds to four significant digits and names missing values', () => {
		expect(formatValue('ratio', 2.0004567)).toBe('2');
		expect(formatValue('p', 0.000123456)).toBe('0.0001235');
		expect(formatValue('x', null)).toBe('—');
		expect(formatValue('x', [])).toBe('—');
		expect(formatValue('ok', true)).toBe('yes');
	});

	it('the temperature fit’s three answers: yes, no, and cannot tell (null), not "missing"', () => {
		expect(formatValue('explainedByTemperature', true)).toBe('yes');
		expect(formatValue('explainedByTemperature', false)).toBe('no');
		expect(formatValue('explainedByTemperature', null)).toBe('cannot tell');
		expect(labelFor('residualInterval')).toBe('Unexplained factor interval');
	});

	it('writes nested objects inline and labels unknown keys in words', () => {
		expect(formatValue('lowest', { seq: 7, lock: 0.25 })).toBe('seq 7, lock 0.25');
		expect(labelFor('observedSwitches')).toBe('Observed switches');
		expect(labelFor('dwell_s')).toBe('Dwell');
	});

	it('puts rows of objects in a table and the rest in facts, rule and version apart', () => {
		const view = viewEvidence({
			rule: 'lock_lost',
			version: 2,
			threshold: 0.5,
			values: [
				{ seq: 1, lock: 0.5 },
				{ seq: 2, lock: 0.49 }
			]
		});
		expect(view).toMatchObject({ rule: 'lock_lost', version: 2, facts: [['Threshold', '0.5']] });
		// 0.5 is not below a 0.5 threshold: the rule counts lock < threshold (issue 2, item 6)
		expect(view.tables[0].rows).toEqual([
			['1', '0.5', 'at or above'],
			['2', '0.49', 'below']
		]);
	});
});
