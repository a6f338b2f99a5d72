// Which windows an incident's evidence speaks about, by seq: the page reads those frames (and a
// few either side for context) to draw them.
import { listAt, numAt, objAt } from './read';

export type SeqSpan = {
	/** The windows the evidence comes from. */
	focusFrom: number;
	focusTo: number;
	/** What to read: the focus with context either side. */
	fromSeq: number;
	toSeq: number;
};

/** At most this many windows are read for one incident's charts. */
export const EVIDENCE_WINDOWS_MAX = 2000;

function padded(focusFrom: number, focusTo: number): SeqSpan {
	const width = focusTo - focusFrom + 1;
	const before = Math.max(10, Math.round(width / 4));
	const after = Math.max(5, Math.round(width / 8));
	return { focusFrom, focusTo, fromSeq: Math.max(1, focusFrom - before), toSeq: focusTo + after };
}

export function evidenceSeqSpan(kind: string, evidence: Record<string, unknown>): SeqSpan | null {
	const seqs: number[] = [];
	const add = (x: number | null) => {
		if (x !== null) seqs.push(x);
	};
	switch (kind) {
		case 'rate_drift':
			add(numAt(evidence, 'sinceChange.fromSeq'));
			add(numAt(evidence, 'sinceChange.toSeq'));
			add(numAt(evidence, 'horizon.fromSeq'));
			add(numAt(evidence, 'horizon.toSeq'));
			add(numAt(evidence, 'baseline.fromSeq'));
			add(numAt(evidence, 'baseline.toSeq'));
			break;
		case 'switching_burst':
			for (const t of listAt(evidence, 'tests')) {
				add(numAt(t, 'fromSeq'));
				add(numAt(t, 'toSeq'));
			}
			break;
		case 'occupancy_imbalance':
			add(numAt(objAt(evidence, 'horizon'), 'fromSeq'));
			add(numAt(objAt(evidence, 'horizon'), 'toSeq'));
			break;
		case 'lock_lost':
		case 'aux_limit':
			for (const v of listAt(evidence, 'values')) add(numAt(v, 'seq'));
			add(numAt(evidence, 'lowest.seq'));
			add(numAt(evidence, 'worst.seq'));
			break;
		case 'agent_silent':
			add(numAt(evidence, 'lastSeq'));
			break;
	}
	if (seqs.length === 0) return null;
	return padded(Math.min(...seqs), Math.max(...seqs));
}
