// The clock of the rota and of escalation. Tests set it (PHASEWARDEN_TEST_HOOKS=1 and
// POST /api/dev/escalations/clock) to jump ahead N minutes; otherwise it is the system clock.
import { testHooksEnabled } from '../reports/clock';

let fixed: number | null = null;

export function pagingNow(): Date {
	return new Date(fixed ?? Date.now());
}

/** Sets (or with null, releases) the paging clock; refused unless test hooks are on. */
export function setPagingClock(now_ms: number | null): void {
	if (!testHooksEnabled()) throw new Error('the paging clock can only be set with PHASEWARDEN_TEST_HOOKS=1');
	fixed = now_ms;
}
