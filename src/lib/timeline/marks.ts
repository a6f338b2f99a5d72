// Things drawn over the timeline's tracks as spans or pins: lost data, incidents, notes. Types
// shared by the loader and the page; `SilenceMark` places the silences (src/lib/server/alerting) on the axis.
import type { Annotation } from '../annotations/schema';

/** Seq range never delivered, placed in time between the frames around it. */
export type GapMark = { fromSeq: number; toSeq: number; from_ms: number; to_ms: number };

export type IncidentMark = {
	id: string;
	kind: string;
	severity: 'critical' | 'warning' | 'info';
	state: 'open' | 'acknowledged' | 'resolved';
	summary: string;
	from_ms: number;
	/** Null while unresolved: the span runs to the right edge. */
	to_ms: number | null;
};

/** A muted alert period (not built yet): drawn as a pin like a note when the feature lands. */
export type SilenceMark = { id: string; from_ms: number; to_ms: number | null; reason: string; by: string };

export type TimelineMarks = {
	gaps: GapMark[];
	incidents: IncidentMark[];
	annotations: Annotation[];
	silences: SilenceMark[];
};

/**
 * Agent-clock ms of a server-clock instant, by the offset between the two clocks at the run's
 * last frame (agent t against its receipt time). Incidents opened by the clock (no frame) and
 * resolutions are stamped by the server, while the timeline's axis is the agent's clock.
 */
export function agentTimeOf(server_ms: number, lastFrameT: number | null, lastFrameAt_ms: number | null): number {
	if (lastFrameT === null || lastFrameAt_ms === null) return server_ms;
	return server_ms + (lastFrameT - lastFrameAt_ms);
}
