// The morning report as stored and served (GET /api/reports/morning): what happened in a span on
// some setups — each run's summary and a small chart, the incidents, lost data and annotations.
import type { IncidentLine } from '../summary/incidents';
import type { RunSummary, SummaryAnnotation } from '../summary/summary';

/** One bucket of the small chart: switching rate and its prediction, and mean lock. */
export type SparkPoint = { t_ms: number; switchRate_per_s: number | null; expectedRate_per_s: number | null; lockMean: number | null };

export type ReportRun = {
	id: string;
	name: string;
	setupId: string;
	setupName: string;
	status: 'open' | 'ended';
	summary: RunSummary;
	spark: { resolution_s: number; points: SparkPoint[] };
	/** Path of the run's timeline over the report's span. */
	timelinePath: string;
};

export type ReportIncident = IncidentLine & { runName: string; setupName: string };
export type ReportAnnotation = SummaryAnnotation & { runId: string; runName: string };

export type MorningReport = {
	version: 1;
	since_ms: number;
	until_ms: number;
	timeZone: string;
	generatedAt_ms: number;
	person: { id: string; name: string; email: string } | null;
	setups: { id: string; name: string }[];
	runs: ReportRun[];
	incidents: ReportIncident[];
	annotations: ReportAnnotation[];
};

export function timelinePath(runId: string, from_ms: number, to_ms: number): string {
	return `/runs/${encodeURIComponent(runId)}/timeline?from_ms=${Math.floor(from_ms)}&to_ms=${Math.ceil(to_ms)}`;
}
