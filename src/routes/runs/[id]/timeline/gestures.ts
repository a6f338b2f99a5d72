// Pointer gestures over the track area, reduced to view changes: a mouse drag brushes a span
// (zoom to it), a click picks a time, one finger pans, two fingers pinch. Positions are fractions
// (0..1) of the track area's width so the arithmetic stays in $lib/timeline/view.
export type Gesture =
	| { kind: 'brush'; a: number; b: number }
	| { kind: 'click'; at: number }
	| { kind: 'pan'; by: number }
	| { kind: 'pinch'; factor: number; anchor: number };

export type GestureHandlers = {
	/** While a brush is being drawn (null when it ends or is cancelled). */
	preview(brush: { a: number; b: number } | null): void;
	commit(g: Gesture): void;
};

/** Attaches pointer handling to `el`; returns the detach function. */
export function trackGestures(el: HTMLElement, h: GestureHandlers): () => void {
	const down = new Map<number, { x0: number; x: number; type: string }>();
	let pinchStart: number | null = null;
	const frac = (clientX: number) => {
		const r = el.getBoundingClientRect();
		return r.width > 0 ? (clientX - r.left) / r.width : 0;
	};

	const onDown = (e: PointerEvent) => {
		if (e.button !== 0 && e.pointerType === 'mouse') return;
		if ((e.target as HTMLElement).closest('a,button,input,textarea')) return;
		el.setPointerCapture(e.pointerId);
		down.set(e.pointerId, { x0: frac(e.clientX), x: frac(e.clientX), type: e.pointerType });
		if (down.size === 2) {
			const [p, q] = [...down.values()];
			pinchStart = Math.abs(p.x - q.x);
		}
	};
	const onMove = (e: PointerEvent) => {
		const p = down.get(e.pointerId);
		if (!p) return;
		const x = frac(e.clientX);
		if (down.size === 2 && pinchStart !== null) {
			const before = [...down.values()];
			p.x = x;
			const after = [...down.values()];
			const spreadBefore = Math.abs(before[0].x - before[1].x);
			const spreadAfter = Math.abs(after[0].x - after[1].x);
			if (spreadBefore > 0.01 && spreadAfter > 0.01) {
				h.commit({ kind: 'pinch', factor: spreadBefore / spreadAfter, anchor: (after[0].x + after[1].x) / 2 });
			}
			return;
		}
		if (p.type === 'mouse' || p.type === 'pen') {
			h.preview({ a: p.x0, b: x });
		} else {
			// One finger pans: dragging right shows earlier times.
			h.commit({ kind: 'pan', by: -(x - p.x) });
		}
		p.x = x;
	};
	const onUp = (e: PointerEvent) => {
		const p = down.get(e.pointerId);
		if (!p) return;
		down.delete(e.pointerId);
		if (down.size < 2) pinchStart = null;
		h.preview(null);
		if (e.type === 'pointercancel') return;
		const moved = Math.abs(p.x - p.x0) * el.getBoundingClientRect().width;
		if (moved < 4) h.commit({ kind: 'click', at: p.x0 });
		else if (p.type === 'mouse' || p.type === 'pen') h.commit({ kind: 'brush', a: p.x0, b: frac(e.clientX) });
	};
	el.addEventListener('pointerdown', onDown);
	el.addEventListener('pointermove', onMove);
	el.addEventListener('pointerup', onUp);
	el.addEventListener('pointercancel', onUp);
	return () => {
		el.removeEventListener('pointerdown', onDown);
		el.removeEventListener('pointermove', onMove);
		el.removeEventListener('pointerup', onUp);
		el.removeEventListener('pointercancel', onUp);
	};
}
