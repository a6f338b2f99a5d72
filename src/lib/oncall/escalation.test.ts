// The escalation ladder as the issue states it: critical every 10 minutes by default up to every
// operator and then repeating; warnings every 30 minutes, stopping after the secondary; info never.
import { describe, expect, it } from 'vitest';
import { DEFAULT_ESCALATION_POLICY as P, moreSevere, nextEscalation, stepLevel } from './escalation';

describe('nextEscalation', () => {
	it('walks a critical incident from primary to secondary to every operator, then repeats', () => {
		const t0 = 1_000_000;
		const s1 = nextEscalation(P, 'critical', 0, t0)!;
		expect(s1).toEqual({ step: 1, dueAt_ms: t0 + 10 * 60_000 });
		const s2 = nextEscalation(P, 'critical', s1.step, s1.dueAt_ms)!;
		expect([s2.step, stepLevel(s2.step)]).toEqual([2, 'operators']);
		const s3 = nextEscalation(P, 'critical', s2.step, s2.dueAt_ms)!;
		expect([s3.step, stepLevel(s3.step), s3.dueAt_ms - s2.dueAt_ms]).toEqual([3, 'operators', 600_000]);
	});

	it('stops a warning after the secondary and never escalates info', () => {
		expect(nextEscalation(P, 'warning', 0, 0)).toEqual({ step: 1, dueAt_ms: 30 * 60_000 });
		expect(nextEscalation(P, 'warning', 1, 0)).toBeNull();
		expect(nextEscalation(P, 'info', 0, 0)).toBeNull();
	});

	it('follows a setup policy of its own', () => {
		const quick = { ...P, critical: { ackWithin_min: 2, lastStep: 1, repeat: false } };
		expect(nextEscalation(quick, 'critical', 0, 0)).toEqual({ step: 1, dueAt_ms: 120_000 });
		expect(nextEscalation(quick, 'critical', 1, 0)).toBeNull();
	});
});

describe('stepLevel and moreSevere', () => {
	it('maps steps to levels and orders severities', () => {
		expect([0, 1, 2, 7].map(stepLevel)).toEqual(['primary', 'secondary', 'operators', 'operators']);
		expect(moreSevere('warning', 'critical')).toBe('critical');
		expect(moreSevere('warning', 'info')).toBe('warning');
	});
});
