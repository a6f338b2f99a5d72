// The run page's phase-space picture: the span comes from the URL (?iq_span=), read through the
// IQ service directly.
import { getRuntime } from '$lib/server/runtime';
import { runIq } from '$lib/server/runs/iq';
import { getRun } from '$lib/server/runs/service';
import type { RunIq } from '$lib/iq/run-iq';

export const IQ_SPANS = [
	{ value: '15m', label: 'last 15 min', ms: 15 * 60_000 },
	{ value: '1h', label: 'last hour', ms: 3_600_000 },
	{ value: '6h', label: 'last 6 hours', ms: 6 * 3_600_000 },
	{ value: '24h', label: 'last 24 hours', ms: 24 * 3_600_000 },
	{ value: 'all', label: 'whole run', ms: null }
] as const;

export async function phaseSpaceFor(runId: string, url: URL): Promise<{ iq: RunIq | null; iqSpan: string }> {
	const chosen = IQ_SPANS.find((s) => s.value === url.searchParams.get('iq_span')) ?? IQ_SPANS[1];
	const { db } = await getRuntime();
	const run = await getRun(db, runId);
	if (!run || run.lastFrameT === null) return { iq: null, iqSpan: chosen.value };
	const from_ms = chosen.ms === null ? 0 : run.lastFrameT - chosen.ms;
	return { iq: await runIq(db, run, { from_ms, to_ms: run.lastFrameT }), iqSpan: chosen.value };
}
