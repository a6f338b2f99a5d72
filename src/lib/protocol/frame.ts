// One acquisition window as the agent reports it (wire protocol v1). Shared by server, agent and
// browser so that every side rejects the same frames for the same reasons.
import { z } from 'zod';

/** Largest value of a Postgres `integer` column: seq and every count are stored in one. */
export const MAX_PG_INTEGER = 2_147_483_647;
/**
 * Latest frame time, in Unix ms: the end of the JavaScript Date range (year 275760). Far below 2^53,
 * so `t` stays an exact integer in JSON, in JS and in the bigint column.
 */
export const MAX_T_MS = 8.64e15;

const count = z.number().int().min(0).max(MAX_PG_INTEGER);
// Upper case is allowed so the conventional names keep their units (mxc_mK, pump_dBm, bias_uV).
const AUX_NAME = /^[A-Za-z0-9_]{1,32}$/;

export const MAX_STATES = 64;
export const MAX_AUX = 32;
export const MAX_IQ_BINS = 64;

export const iqHistogramSchema = z
	.object({
		bins: z.number().int().min(1).max(MAX_IQ_BINS),
		extent: z.number().positive(),
		counts: z.array(count)
	})
	.refine((iq) => iq.counts.length === iq.bins * iq.bins, {
		message: 'counts must hold bins × bins integers',
		path: ['counts']
	});

export const auxSchema = z
	.record(z.string().regex(AUX_NAME, 'aux names are 1 to 32 of A-Z, a-z, 0-9 and _'), z.number().finite())
	.refine((aux) => Object.keys(aux).length <= MAX_AUX, { message: `at most ${MAX_AUX} aux values` });

export const frameSchema = z.object({
	seq: z.number().int().min(1).max(MAX_PG_INTEGER),
	t: z.number().finite().positive().max(MAX_T_MS),
	window_s: z.number().finite().positive(),
	shots: count,
	vacuum: count,
	counts: z.array(count).min(1).max(MAX_STATES),
	lock: z.number().min(0).max(1),
	switches: count,
	dwell_s: z.number().finite().min(0),
	escapes: count,
	vacuum_s: z.number().finite().min(0),
	transitions: z.array(count).optional(),
	amp: z.number().finite().min(0).optional(),
	aux: auxSchema.optional(),
	iq: iqHistogramSchema.optional()
});

export type Frame = z.infer<typeof frameSchema>;

/**
 * Checks that depend on the run (the number of phase states K) and on the frame as a whole.
 * Returns the first problem as a field path and a message, or null when the frame is consistent.
 */
export function checkFrameAgainstRun(frame: Frame, states: number): { path: string; message: string } | null {
	if (frame.counts.length !== states) {
		return { path: 'counts', message: `expected ${states} entries (one per phase state), got ${frame.counts.length}` };
	}
	if (frame.transitions && frame.transitions.length !== states * states) {
		return {
			path: 'transitions',
			message: `expected ${states * states} entries (K×K), got ${frame.transitions.length}`
		};
	}
	const inStates = frame.counts.reduce((a, b) => a + b, 0);
	if (inStates + frame.vacuum > frame.shots) {
		return {
			path: 'shots',
			message: `vacuum + counts (${inStates + frame.vacuum}) exceed shots (${frame.shots})`
		};
	}
	return null;
}
