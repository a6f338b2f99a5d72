// The clock of the morning-report scheduler. Tests set it (PHASEWARDEN_TEST_HOOKS=1 and
// POST /api/dev/reports/clock) to play a scripted night; otherwise it is the system clock.

let fixed: number | null = null;

export function testHooksEnabled(env: NodeJS.ProcessEnv = process.env): boolean {
	return env.PHASEWARDEN_TEST_HOOKS === '1';
}

export function reportNow(): number {
	return fixed ?? Date.now();
}

/** Sets (or with null, releases) the report clock; refused unless test hooks are on. */
export function setReportClock(now_ms: number | null): void {
	if (!testHooksEnabled()) throw new Error('the report clock can only be set with PHASEWARDEN_TEST_HOOKS=1');
	fixed = now_ms;
}
