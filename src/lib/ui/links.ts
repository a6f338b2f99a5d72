// Addresses of pages other pages and e-mails link to, built in one place.

/**
 * The timeline of a run; with a span, zoomed to [from_ms, to_ms) (agent-clock ms). A span given
 * by only one end, or backwards, opens the whole run instead of a broken view.
 */
export function timelineHref(runId: string, from_ms?: number | null, to_ms?: number | null): string {
	const base = `/runs/${encodeURIComponent(runId)}/timeline`;
	if (from_ms == null || to_ms == null || !(to_ms > from_ms)) return base;
	return `${base}?from_ms=${Math.floor(from_ms)}&to_ms=${Math.ceil(to_ms)}`;
}

/** A span around an instant (e.g. an incident opening), `before_ms` before and `after_ms` after it. */
export function timelineAround(runId: string, at_ms: number, before_ms = 30 * 60_000, after_ms = 30 * 60_000): string {
	return timelineHref(runId, at_ms - before_ms, at_ms + after_ms);
}
