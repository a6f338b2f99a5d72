// agent_silent against its definition in the product spec (issue 2, item 6): no frame for after_s
// of server clock while the run is open opens a warning; the next frame clears it.
import { describe, expect, it } from 'vitest';
import { DetectorEngine, defaultRules } from '../../../src/lib/detect';
import { frame, K, T0_ms } from './frames';

const S = 1000;

describe('agent_silent', () => {
	it('defaults to 60 s, version 1', () => {
		expect(defaultRules().agent_silent).toEqual({ enabled: true, version: 1, after_s: 60 });
	});

	it('opens once the silence reaches after_s of server clock, and not before', () => {
		const engine = new DetectorEngine({}, { states: K });
		const heard = 5_000_000;
		engine.onFrame(frame(1, 0.9), heard);
		expect(engine.onClock(heard + 59.999 * S)).toEqual([]);
		const open = engine.onClock(heard + 60 * S);
		expect(open).toMatchObject([{ type: 'open', kind: 'agent_silent', severity: 'warning', at_ms: heard + 60 * S, seq: 1 }]);
		expect(open[0].evidence).toEqual({
			rule: 'agent_silent',
			version: 1,
			after_s: 60,
			silence_s: 60,
			lastFrameAt_ms: heard,
			lastSeq: 1,
			lastFrameT_ms: frame(1, 0).t
		});
		expect(engine.onClock(heard + 600 * S)).toEqual([]);
	});

	it('clears on the next frame, with the length of the silence, and watches again from there', () => {
		const engine = new DetectorEngine({ agent_silent: { after_s: 30 } }, { states: K });
		engine.onFrame(frame(1, 0.9), 0);
		engine.onClock(45 * S);
		const clear = engine.onFrame(frame(2, 0.9), 90 * S);
		expect(clear).toMatchObject([{ type: 'clear', kind: 'agent_silent', at_ms: 90 * S, seq: 2 }]);
		expect(clear[0].evidence).toMatchObject({ silence_s: 90, lastFrameAt_ms: 0, resumedSeq: 2 });
		expect(engine.onClock(119 * S)).toEqual([]);
		expect(engine.onClock(120 * S)).toMatchObject([{ type: 'open', seq: 2 }]);
	});

	it('follows the server clock, not the agent clock written in the frames', () => {
		const engine = new DetectorEngine({}, { states: K });
		// the agent's clock is an hour behind the server's
		engine.onFrame(frame(1, 0.9, { t: T0_ms - 3600 * S }), T0_ms);
		expect(engine.onClock(T0_ms + 30 * S)).toEqual([]);
	});

	it('uses the frame time when no receipt time is given (replay of stored frames)', () => {
		const engine = new DetectorEngine({}, { states: K });
		engine.onFrame(frame(1, 0.9));
		expect(engine.onClock(frame(1, 0).t + 60 * S)).toHaveLength(1);
	});

	it('counts from the opening of the run when no frame has come yet', () => {
		const engine = new DetectorEngine({}, { states: K, openedAt_ms: 1_000 });
		const open = engine.onClock(61_000);
		expect(open).toMatchObject([{ type: 'open', kind: 'agent_silent' }]);
		expect(open[0]).not.toHaveProperty('seq');
		expect(open[0].type === 'open' && open[0].summary).toContain('since the run opened');
		expect(engine.onFrame(frame(1, 0.9), 70_000)).toMatchObject([{ type: 'clear', seq: 1 }]);
	});

	it('cannot open before anything is known about the run', () => {
		const engine = new DetectorEngine({}, { states: K });
		expect(engine.onClock(1e15)).toEqual([]);
	});

	it('clears when the run ends, and the clock is ignored after the end', () => {
		const engine = new DetectorEngine({}, { states: K });
		engine.onFrame(frame(1, 0.9), 0);
		engine.onClock(61 * S);
		expect(engine.endRun(62 * S)).toMatchObject([{ type: 'clear', kind: 'agent_silent', at_ms: 62 * S }]);
		expect(engine.onClock(1000 * S)).toEqual([]);
		expect(engine.openConditions()).toEqual([]);
	});

	it('a disabled rule never opens, and on re-enabling it measures from the real last frame', () => {
		const engine = new DetectorEngine({ agent_silent: { enabled: false } }, { states: K });
		engine.onFrame(frame(1, 0.9), 0);
		expect(engine.onClock(500 * S)).toEqual([]);
		engine.onFrame(frame(2, 0.9), 600 * S);
		engine.setRules({ agent_silent: { enabled: true, version: 2 } }, 601 * S);
		expect(engine.onClock(659 * S)).toEqual([]);
		const open = engine.onClock(660 * S);
		expect(open).toHaveLength(1);
		expect(open[0].evidence).toMatchObject({ version: 2, lastFrameAt_ms: 600 * S });
	});
});
