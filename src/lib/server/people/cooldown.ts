// At most one message per key per window: stops "Forgot password?" being used to flood someone's
// inbox. In memory and per instance on purpose: it guards an inbox, not an account, so a restart
// or a second instance letting one more mail through does no harm.
export function createCooldown(window_ms: number, now: () => number = Date.now) {
	const last = new Map<string, number>();
	return {
		/** True (and the key is stamped) when nothing went out for this key within the window. */
		take(key: string): boolean {
			const t = now();
			for (const [k, at] of last) if (t - at >= window_ms) last.delete(k);
			if (last.has(key)) return false;
			last.set(key, t);
			return true;
		}
	};
}
