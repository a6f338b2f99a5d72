// The engine's promise from the detector brief: at most one open condition per (kind, key) per run;
// several keys of one kind (as aux_limit will have, one per aux name) live side by side.
import { describe, expect, it } from 'vitest';
import { acceptSignal, isOpen, type OpenCondition, type Signal } from '../../../src/lib/detect';

const ev = { rule: 'aux_limit', version: 1 };
const open = (key: string | undefined, at_ms: number): Signal => ({
	type: 'open',
	...(key === undefined ? {} : { key }),
	severity: 'warning',
	at_ms,
	summary: `over ${key}`,
	evidence: ev
});
const clear = (key: string | undefined, at_ms: number): Signal => ({
	type: 'clear',
	...(key === undefined ? {} : { key }),
	at_ms,
	summary: 'back',
	evidence: ev
});

describe('acceptSignal', () => {
	it('keeps one open condition per (kind, key), several keys side by side', () => {
		const set: OpenCondition[] = [];
		expect(acceptSignal(set, 'aux_limit', true, open('mxc_mK', 1))).toMatchObject({ type: 'open', key: 'mxc_mK' });
		expect(acceptSignal(set, 'aux_limit', true, open('pump_dBm', 2))).toMatchObject({ type: 'open', key: 'pump_dBm' });
		expect(acceptSignal(set, 'aux_limit', true, open('mxc_mK', 3))).toBeNull();
		expect(set.map((c) => c.key)).toEqual(['mxc_mK', 'pump_dBm']);
		expect(acceptSignal(set, 'aux_limit', true, clear('mxc_mK', 4))).toMatchObject({ type: 'clear', key: 'mxc_mK', at_ms: 4 });
		expect(isOpen(set, 'aux_limit', 'mxc_mK')).toBe(false);
		expect(isOpen(set, 'aux_limit', 'pump_dBm')).toBe(true);
		expect(acceptSignal(set, 'aux_limit', true, open('mxc_mK', 5))).not.toBeNull();
	});

	it('drops a clear or update of something not open, and openings of a disabled rule', () => {
		const set: OpenCondition[] = [];
		expect(acceptSignal(set, 'lock_lost', true, clear(undefined, 1))).toBeNull();
		expect(acceptSignal(set, 'lock_lost', true, { type: 'update', at_ms: 1, evidence: ev })).toBeNull();
		expect(acceptSignal(set, 'lock_lost', false, open(undefined, 1))).toBeNull();
		expect(set).toEqual([]);
	});

	it('a kind without key and the same kind with a key are different conditions; kinds do not mix', () => {
		const set: OpenCondition[] = [];
		acceptSignal(set, 'lock_lost', true, open(undefined, 1));
		expect(acceptSignal(set, 'agent_silent', true, open(undefined, 2))).not.toBeNull();
		expect(acceptSignal(set, 'lock_lost', true, open('x', 3))).not.toBeNull();
		expect(set).toHaveLength(3);
	});

	it('leaves absent fields out of events instead of setting them undefined', () => {
		const event = acceptSignal([], 'lock_lost', true, open(undefined, 1));
		expect(event && Object.keys(event)).toEqual(['type', 'kind', 'severity', 'at_ms', 'summary', 'evidence']);
	});
});
