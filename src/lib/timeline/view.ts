// The visible span of the timeline and how panning and zooming move it: pure arithmetic on agent
// ms, shared by the mouse, touch and keyboard handlers and kept in the URL (?from_ms&to_ms).

export type View = { from_ms: number; to_ms: number };

/** Narrowest view: one second-wide frame bucket per point would be finer than any window. */
export const MIN_VIEW_MS = 10_000;

export const width = (v: View) => v.to_ms - v.from_ms;

/** Keeps a view at least MIN_VIEW_MS wide and, when bounds are given, inside them where it fits. */
export function clampView(v: View, bounds?: View): View {
	let { from_ms, to_ms } = v;
	if (to_ms - from_ms < MIN_VIEW_MS) {
		const mid = (from_ms + to_ms) / 2;
		from_ms = mid - MIN_VIEW_MS / 2;
		to_ms = mid + MIN_VIEW_MS / 2;
	}
	if (bounds) {
		const w = to_ms - from_ms;
		if (w >= width(bounds)) return { ...bounds };
		if (from_ms < bounds.from_ms) [from_ms, to_ms] = [bounds.from_ms, bounds.from_ms + w];
		if (to_ms > bounds.to_ms) [from_ms, to_ms] = [bounds.to_ms - w, bounds.to_ms];
	}
	return { from_ms: Math.round(from_ms), to_ms: Math.round(to_ms) };
}

/** Zooms by `factor` (< 1 narrows, > 1 widens) keeping the time at `anchor` (0..1 across) in place. */
export function zoom(v: View, factor: number, anchor = 0.5, bounds?: View): View {
	const at = v.from_ms + anchor * width(v);
	const w = width(v) * factor;
	return clampView({ from_ms: at - anchor * w, to_ms: at - anchor * w + w }, bounds);
}

/** Moves the view by `fraction` of its width (negative: earlier). */
export function pan(v: View, fraction: number, bounds?: View): View {
	const d = fraction * width(v);
	return clampView({ from_ms: v.from_ms + d, to_ms: v.to_ms + d }, bounds);
}

/** The view between two positions (0..1 across the track area), in either order. */
export function brushed(v: View, a: number, b: number): View {
	const lo = Math.max(0, Math.min(a, b));
	const hi = Math.min(1, Math.max(a, b));
	return clampView({ from_ms: v.from_ms + lo * width(v), to_ms: v.from_ms + hi * width(v) });
}

/** ?from_ms&to_ms when both are whole non-negative numbers in order; otherwise null (whole run). */
export function viewFromParams(params: URLSearchParams): View | null {
	const from = Number(params.get('from_ms'));
	const to = Number(params.get('to_ms'));
	if (!params.has('from_ms') || !params.has('to_ms')) return null;
	if (!Number.isInteger(from) || !Number.isInteger(to) || from < 0 || to <= from) return null;
	return { from_ms: from, to_ms: to };
}

/** Position (0..1) of a time within the view. */
export const fractionOf = (v: View, t_ms: number) => (t_ms - v.from_ms) / width(v);
