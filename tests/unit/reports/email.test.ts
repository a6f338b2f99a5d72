// The report e-mail and sparkline from a hand-made report: plain sentences with the numbers of the
// report, HTML escaped, links to the timeline, no machine field names.
import { describe, expect, it } from 'vitest';
import { reportHtml, reportSubject, reportText } from '../../../src/lib/reports/email';
import type { MorningReport } from '../../../src/lib/reports/report';
import { sparkPath } from '../../../src/lib/reports/sparkline';
import { summarize } from '../../../src/lib/summary/summary';

const T = Date.parse('2026-12-01T07:00:00Z');

function report(): MorningReport {
	const summary = summarize({
		runId: 'r1',
		states: 2,
		span: { from_ms: T - 86_400_000, to_ms: T },
		covered: { from_ms: T - 86_400_000, to_ms: T },
		buckets: [
			{
				resolution_s: 3600,
				bucket_t: T - 3_600_000,
				frames: 3600,
				firstSeq: 1,
				lastSeq: 3600,
				window_s: 3600,
				shots: 100,
				vacuum: 0,
				counts: [50, 50],
				switches: 40,
				dwell_s: 3600,
				escapes: 0,
				vacuum_s: 0,
				transitions: [0, 20, 20, 0],
				lockMin: 0.9,
				lockSum: 3400,
				lockMax: 0.99,
				aux: {},
				expectedSwitches: 10,
				expectedEscapes: null
			}
		],
		lockThreshold: 0.5,
		expectedPairs: 'all',
		symmetric: true,
		gaps: [{ fromSeq: 10, toSeq: 19, before: { t_ms: T - 3_000_000, window_s: 1 }, after_t_ms: T - 2_989_000 }],
		incidents: [
			{
				id: 'i1',
				runId: 'r1',
				kind: 'lock_lost',
				severity: 'critical',
				state: 'resolved',
				summary: 'Lock quality below 0.5 for 5 windows',
				opened_ms: T - 2_000_000,
				openedAt_ms: T - 2_000_000,
				acknowledgedAt_ms: T - 2_000_000 + 125_000,
				acknowledgedBy: 'Ada <Night> Shift',
				resolvedAt_ms: T - 1_000_000,
				resolvedBy: 'the detector'
			}
		]
	});
	return {
		version: 1,
		since_ms: T - 86_400_000,
		until_ms: T,
		timeZone: 'Europe/Berlin',
		generatedAt_ms: T,
		person: null,
		setups: [{ id: 's1', name: 'Fridge A' }],
		runs: [
			{
				id: 'r1',
				name: 'Cooldown 7',
				setupId: 's1',
				setupName: 'Fridge A',
				status: 'open',
				summary,
				spark: {
					resolution_s: 1800,
					points: [{ t_ms: T - 3_600_000, switchRate_per_s: 0.011, expectedRate_per_s: 0.0028, lockMean: 0.94 }]
				},
				timelinePath: `/runs/r1/timeline?from_ms=${T - 86_400_000}&to_ms=${T}`
			}
		],
		incidents: summary.incidents.map((i) => ({ ...i, runName: 'Cooldown 7', setupName: 'Fridge A' })),
		annotations: [{ id: 1, at_ms: T - 5_000_000, until_ms: null, text: 'helium transfer', runId: 'r1', runName: 'Cooldown 7' }]
	};
}

describe('report e-mail', () => {
	it('tells the night in sentences with the report’s numbers', () => {
		const r = report();
		const text = reportText(r, 'https://pw.lab');
		expect(reportSubject(r)).toBe('Morning report: 1 run, 1 incident — 2026-11-30 08:00 to 2026-12-01 08:00');
		expect(text).toContain('from 2026-11-30 08:00 to 2026-12-01 08:00 (Europe/Berlin)');
		// 40 switches where 10 were predicted: above the prediction.
		expect(text).toMatch(/40 switching events in 3600 s: .* above the predicted/);
		expect(text).toContain('Lost data: 10 s (10 frames never arrived).');
		expect(text).toContain('Acknowledged by Ada <Night> Shift after 2 min 05 s, resolved by the detector after 16 min 40 s.');
		expect(text).toContain(`https://pw.lab/runs/r1/timeline?from_ms=${T - 86_400_000}&to_ms=${T}`);
		expect(text).toContain('helium transfer');
		expect(text.replace(/https?:\/\/\S+/g, '')).not.toMatch(/_s\b|_ms\b|lockMin|expectedSwitches/);
		expect(text).toContain('(p < 0.0001)');
	});

	it('escapes names in the HTML part and draws a sparkline', () => {
		const html = reportHtml(report(), 'https://pw.lab');
		expect(html).toContain('Ada &lt;Night&gt; Shift');
		expect(html).not.toContain('<Night>');
		expect(html).toContain('<svg');
		expect(html).toContain('href="https://pw.lab/runs/r1/timeline?');
	});
});

describe('sparkPath', () => {
	it('scales values into the box and breaks the line at missing values', () => {
		expect(sparkPath([0, 10, null, 5], 30, 12)).toBe('M0.0 11.0 L10.0 1.0 M30.0 6.0');
		expect(sparkPath([null, null], 30, 12)).toBe('');
	});
});

describe('sparkPath with one bucket', () => {
	it('draws a level line across the box', () => {
		expect(sparkPath([4], 30, 12)).toBe('M0.0 1.0 L30.0 1.0');
	});
});
