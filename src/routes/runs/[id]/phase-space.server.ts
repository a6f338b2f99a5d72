// The run page's phase-space picture: the span comes from the URL (?iq_span=), read through the
// IQ service directly.
import { getRuntime } from '$lib/server/runtime';
import { runIq } from '$lib/server/runs/iq';
import { getRun } from '$lib/server/runs/service';
import type { RunIq } from '$lib/iq/run-iq';
import { iqSpanOf } from '$lib/iq/spans';

export async function phaseSpaceFor(runId: string, url: URL): Promise<{ iq: RunIq | null; iqSpan: string }> {
	const chosen = iqSpanOf(url.searchParams.get('iq_span'));
	const { db } = await getRuntime();
	const run = await getRun(db, runId);
	if (!run || run.lastFrameT === null) return { iq: null, iqSpan: chosen.value };
	const from_ms = chosen.ms === null ? 0 : run.lastFrameT - chosen.ms;
	return { iq: await runIq(db, run, { from_ms, to_ms: run.lastFrameT }), iqSpan: chosen.value };
}
