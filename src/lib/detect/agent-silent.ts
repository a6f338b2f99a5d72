// agent_silent: no frame for `after_s` of server clock while the run is open; the next frame clears it.
//
// This is the one detector that reads the server's clock, because the agent's own clock stops with
// the agent. Frames are timed by their receipt on the server when the caller gives it; without it
// (replaying stored frames) the frame's own `t` stands in.
import { z } from 'zod';
import type { Detector } from './detector';
import type { Evidence, Signal } from './events';
import type { AgentSilentRule } from './rules';

const agentSilentStateSchema = z.object({
	/** When the server last heard from the agent (or when the run opened), ms. */
	lastHeard_ms: z.number().nullable(),
	lastSeq: z.number().int().nullable(),
	/** Agent clock of the last frame. */
	lastFrameT_ms: z.number().nullable()
});
export type AgentSilentState = z.infer<typeof agentSilentStateSchema>;

function ruleEvidence(rule: AgentSilentRule): Evidence {
	return { rule: 'agent_silent', version: rule.version, after_s: rule.after_s };
}

const seconds = (ms: number) => Math.round(ms / 100) / 10;

export const agentSilent: Detector<'agent_silent', AgentSilentState> = {
	kind: 'agent_silent',
	stateSchema: agentSilentStateSchema,

	init: (run) => ({ lastHeard_ms: run.openedAt_ms ?? null, lastSeq: null, lastFrameT_ms: null }),

	onFrame(state, frame, { rule, isOpen }, receivedAt_ms): Signal[] {
		const heard_ms = receivedAt_ms ?? frame.t;
		const signals: Signal[] = [];
		if (isOpen() && state.lastHeard_ms !== null) {
			const silence_s = seconds(heard_ms - state.lastHeard_ms);
			signals.push({
				type: 'clear',
				at_ms: heard_ms,
				seq: frame.seq,
				summary: `Frames arriving again after ${silence_s} s of silence (seq ${frame.seq})`,
				evidence: {
					...ruleEvidence(rule),
					silence_s,
					lastFrameAt_ms: state.lastHeard_ms,
					lastSeq: state.lastSeq,
					resumedAt_ms: heard_ms,
					resumedSeq: frame.seq
				}
			});
		}
		state.lastHeard_ms = heard_ms;
		state.lastSeq = frame.seq;
		state.lastFrameT_ms = frame.t;
		return signals;
	},

	onClock(state, now_ms, { rule, isOpen }): Signal[] {
		if (isOpen() || state.lastHeard_ms === null) return [];
		const silent_ms = now_ms - state.lastHeard_ms;
		if (silent_ms < rule.after_s * 1000) return [];
		const silence_s = seconds(silent_ms);
		const since = state.lastSeq === null ? 'since the run opened' : `since seq ${state.lastSeq}`;
		return [
			{
				type: 'open',
				severity: 'warning',
				at_ms: now_ms,
				...(state.lastSeq === null ? {} : { seq: state.lastSeq }),
				summary: `No frame from the agent for ${silence_s} s ${since} (limit ${rule.after_s} s)`,
				evidence: {
					...ruleEvidence(rule),
					silence_s,
					lastFrameAt_ms: state.lastHeard_ms,
					lastSeq: state.lastSeq,
					lastFrameT_ms: state.lastFrameT_ms
				}
			}
		];
	},

	onEnd(state, at_ms, { rule, isOpen }): Signal[] {
		if (!isOpen()) return [];
		return [
			{
				type: 'clear',
				at_ms,
				summary: 'The run ended; the agent is no longer expected to send frames',
				evidence: { ...ruleEvidence(rule), lastFrameAt_ms: state.lastHeard_ms, lastSeq: state.lastSeq, endedAt_ms: at_ms }
			}
		];
	}
};
