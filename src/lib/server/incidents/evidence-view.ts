// What the incident page draws: the evidence's windows read back from the stored frames (a
// bounded read by seq, the primary key), turned into chart models, and the phase-space picture
// over the same windows.
import { and, desc, eq, gte, lte } from 'drizzle-orm';
import type { Db } from '../db';
import { frames } from '../db/schema';
import { evidenceCharts, type Chart } from '../../incidents/evidence-chart';
import { EVIDENCE_WINDOWS_MAX, evidenceSeqSpan } from '../../incidents/evidence-span';
import type { EvidenceWindow } from '../../incidents/evidence-window';
import { runIq } from '../runs/iq';
import type { RunIq } from '../../iq/run-iq';
import type { RunRow } from '../runs/service';

export type EvidenceView = {
	charts: Chart[];
	iq: RunIq | null;
	/** Windows read, and whether the span was longer than the read allows (the latest were kept). */
	windows: number;
	truncated: boolean;
};

export async function readEvidenceWindows(
	db: Db,
	runId: string,
	fromSeq: number,
	toSeq: number
): Promise<{ windows: EvidenceWindow[]; truncated: boolean }> {
	const rows = await db
		.select({
			seq: frames.seq,
			t_ms: frames.t,
			window_s: frames.windowS,
			lock: frames.lock,
			switches: frames.switches,
			escapes: frames.escapes,
			dwell_s: frames.dwellS,
			vacuum_s: frames.vacuumS,
			aux: frames.aux
		})
		.from(frames)
		.where(and(eq(frames.runId, runId), gte(frames.seq, fromSeq), lte(frames.seq, toSeq)))
		.orderBy(desc(frames.seq))
		.limit(EVIDENCE_WINDOWS_MAX + 1);
	const truncated = rows.length > EVIDENCE_WINDOWS_MAX;
	return { windows: rows.slice(0, EVIDENCE_WINDOWS_MAX).reverse(), truncated };
}

export async function incidentEvidenceView(
	db: Db,
	incident: { kind: string; key: string | null; evidence: Record<string, unknown> },
	run: Pick<RunRow, 'id' | 'states' | 'lastFrameT'>
): Promise<EvidenceView> {
	const span = evidenceSeqSpan(incident.kind, incident.evidence);
	if (!span)
		return {
			charts: evidenceCharts({ ...incident, windows: [], focus: null, states: run.states }),
			iq: null,
			windows: 0,
			truncated: false
		};
	const { windows, truncated } = await readEvidenceWindows(db, run.id, span.fromSeq, span.toSeq);
	const focus = { fromSeq: span.focusFrom, toSeq: span.focusTo };
	const charts = evidenceCharts({ ...incident, windows, focus, states: run.states });
	const inFocus = windows.filter((w) => w.seq >= focus.fromSeq && w.seq <= focus.toSeq);
	const iq = inFocus.length
		? await runIq(db, run, { from_ms: Math.round(inFocus[0].t_ms - inFocus[0].window_s * 1000), to_ms: inFocus.at(-1)!.t_ms })
		: null;
	return { charts, iq, windows: windows.length, truncated };
}
