// Frames a six-state period tripler would send: the same shape for the app and the raw baseline.
export const RUN_STATES = 6;
export const GOOD_LOCK = 0.93;
export const LOW_LOCK = 0.2;

export function benchRun(key: string) {
	return { key, name: `Bench run ${key}`, order: 3, states: RUN_STATES, mode_GHz: 5.0 };
}

/** One acquisition window; `t_ms` is the end of the window on the agent's clock. */
export function benchFrame(seq: number, t_ms: number, lock = GOOD_LOCK) {
	return {
		seq,
		t: t_ms,
		window_s: 1,
		shots: 2000,
		vacuum: 30 + (seq % 7),
		counts: [330, 325, 327 + (seq % 3), 326, 322, 330],
		lock,
		switches: 2 + (seq % 4),
		dwell_s: 0.98,
		escapes: seq % 2,
		vacuum_s: 0.02,
		amp: 3.94,
		aux: { mxc_mK: 12.1 + (seq % 10) / 100, pump_dBm: -23, bias_uV: 18 }
	};
}

export type BenchFrame = ReturnType<typeof benchFrame>;
