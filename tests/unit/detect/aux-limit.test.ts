// aux_limit on hand-built windows: the rule of the detector brief (a value beyond its limit for N
// consecutive windows opens; M windows back inside the clearing bound close it; one incident per
// name; a window without the value carries no information).
import { describe, expect, it } from 'vitest';
import { DetectorEngine, parseDetectorRules, type DetectorEvent } from '../../../src/lib/detect';
import type { Frame } from '../../../src/lib/protocol/frame';
import { frame } from './frames';
import { run6 } from './models';

const withAux = (seq: number, aux?: Record<string, number>): Frame => ({ ...frame(seq, 0.95), ...(aux ? { aux } : {}) });
const mxc = (from: number, values: (number | null)[]) => values.map((v, i) => withAux(from + i, v === null ? undefined : { mxc_mK: v }));
const feed = (engine: DetectorEngine, fs: Frame[]) => fs.flatMap((f) => engine.onFrame(f));
const aux = (events: DetectorEvent[]) => events.filter((e) => e.kind === 'aux_limit');

describe('aux_limit default rule: mxc_mK above 30, clears at or below 28', () => {
	it('opens at the third consecutive window above 30, with the values and the rule', () => {
		const events = aux(feed(new DetectorEngine({}, run6()), mxc(1, [29, 31, 30, 31, 32, 33])));
		// 30 is not above 30: the streak starts again at seq 4
		expect(events).toHaveLength(1);
		expect(events[0]).toMatchObject({ type: 'open', key: 'mxc_mK', severity: 'warning', seq: 6 });
		expect(events[0].evidence).toMatchObject({
			rule: 'aux_limit',
			version: 1,
			name: 'mxc_mK',
			side: 'above',
			count: 3,
			limit: { name: 'mxc_mK', above: 30, clearBelow: 28, windows: 3 },
			values: [
				{ seq: 4, value: 31 },
				{ seq: 5, value: 32 },
				{ seq: 6, value: 33 }
			]
		});
	});

	it('a window without mxc_mK neither extends nor breaks the streak', () => {
		const events = aux(feed(new DetectorEngine({}, run6()), mxc(1, [31, null, 32, null, null, 31])));
		expect(events).toMatchObject([{ type: 'open', seq: 6 }]);
		expect((events[0].evidence as any).values.map((v: { seq: number }) => v.seq)).toEqual([1, 3, 6]);
	});

	it('hysteresis: 29 does not count towards clearing, three windows at or below 28 do', () => {
		const engine = new DetectorEngine({}, run6());
		feed(engine, mxc(1, [31, 31, 31]));
		expect(aux(feed(engine, mxc(4, [29, 28, 29, 28, 27])))).toEqual([]);
		const events = aux(feed(engine, mxc(9, [28])));
		expect(events).toMatchObject([{ type: 'clear', key: 'mxc_mK', seq: 9 }]);
		expect((events[0].evidence as any).worst).toMatchObject({ value: 31 });
	});

	it('a new extreme while open updates the evidence', () => {
		const engine = new DetectorEngine({}, run6());
		feed(engine, mxc(1, [31, 31, 31]));
		expect(aux(feed(engine, mxc(4, [35, 33])))).toMatchObject([{ type: 'update', evidence: { worst: { seq: 4, value: 35 } } }]);
	});
});

describe('aux_limit rules', () => {
	it('lower limits, critical severity, and one incident per name', () => {
		const rules = {
			aux_limit: {
				limits: [
					{ name: 'pump_dBm', below: -10, clearAbove: -8, windows: 2, severity: 'critical' },
					{ name: 'mxc_mK', above: 30, windows: 1, clearWindows: 1 }
				]
			}
		};
		const engine = new DetectorEngine(rules, run6());
		const events = aux(
			feed(engine, [withAux(1, { pump_dBm: -11, mxc_mK: 31 }), withAux(2, { pump_dBm: -12, mxc_mK: 31 }), withAux(3, { pump_dBm: -13 })])
		);
		expect(events.filter((e) => e.type === 'open')).toMatchObject([
			{ key: 'mxc_mK', severity: 'warning', seq: 1 },
			{ key: 'pump_dBm', severity: 'critical', seq: 2, evidence: { side: 'below' } }
		]);
		// clearBelow defaults to above: 30 itself is back inside
		expect(aux(feed(engine, [withAux(4, { mxc_mK: 30, pump_dBm: -9 })]))).toMatchObject([{ type: 'clear', key: 'mxc_mK' }]);
	});

	it('a limit removed while open clears at the next frame', () => {
		const engine = new DetectorEngine({}, run6());
		feed(engine, mxc(1, [31, 31, 31]));
		engine.setRules({ aux_limit: { version: 2, limits: [{ name: 'bias_uV', above: 50 }] } }, 0);
		expect(aux(feed(engine, [withAux(4)]))).toMatchObject([
			{ type: 'clear', key: 'mxc_mK', evidence: { reason: 'limit_removed', version: 2 } }
		]);
	});

	it('bad limits are refused with the field named', () => {
		expect(() => parseDetectorRules({ aux_limit: { limits: [{ name: 'mxc_mK' }] } })).toThrow(
			/aux_limit\.limits\.0\.above: needs above, below or both/
		);
		expect(() => parseDetectorRules({ aux_limit: { limits: [{ name: 'mxc_mK', above: 30, clearBelow: 31 }] } })).toThrow(
			/aux_limit\.limits\.0\.clearBelow: must be at most above/
		);
		expect(() => parseDetectorRules({ aux_limit: { limits: [{ name: 'bad name', above: 1 }] } })).toThrow(/aux_limit\.limits\.0\.name/);
		expect(() =>
			parseDetectorRules({
				aux_limit: {
					limits: [
						{ name: 'mxc_mK', above: 30 },
						{ name: 'mxc_mK', below: 5 }
					]
				}
			})
		).toThrow(/aux_limit\.limits: one limit per aux name/);
		expect(() => parseDetectorRules({ aux_limit: { limits: [{ name: 'x', above: 1, below: 2 }] } })).toThrow(
			/limits\.0\.below: must be less than above/
		);
	});
});
