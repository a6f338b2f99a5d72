// Incidents as the summary and the morning report list them: when, how long until someone
// acknowledged it and until it was resolved, and by whom.

export type IncidentFacts = {
	id: string;
	runId: string;
	kind: string;
	severity: 'critical' | 'warning' | 'info';
	state: 'open' | 'acknowledged' | 'resolved';
	summary: string;
	/** When it opened on the agent's clock where a frame opened it, else on the server's (ms). */
	opened_ms: number;
	openedAt_ms: number;
	acknowledgedAt_ms: number | null;
	acknowledgedBy: string | null;
	resolvedAt_ms: number | null;
	resolvedBy: string | null;
};

export type IncidentLine = IncidentFacts & {
	/** Server-clock seconds from opening to acknowledgement / resolution; null while pending. */
	toAcknowledge_s: number | null;
	toResolve_s: number | null;
};

export function incidentLine(i: IncidentFacts): IncidentLine {
	const since = (at: number | null) => (at === null ? null : Math.max(0, (at - i.openedAt_ms) / 1000));
	return { ...i, toAcknowledge_s: since(i.acknowledgedAt_ms), toResolve_s: since(i.resolvedAt_ms) };
}

/** Median of the known values, or null. */
export function median(values: readonly (number | null)[]): number | null {
	const known = values.filter((v): v is number => v !== null).sort((a, b) => a - b);
	if (known.length === 0) return null;
	const mid = Math.floor(known.length / 2);
	return known.length % 2 ? known[mid] : (known[mid - 1] + known[mid]) / 2;
}
