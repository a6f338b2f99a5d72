// Phase-state colours: state i of K sits at hue 360°·i/K, so histogram lobes and bars read alike.

/** Hue angle in degrees of phase state i (0-based) out of K states. */
export function hue(i: number, K: number): number {
	if (!Number.isInteger(K) || K < 1) throw new RangeError(`K must be a positive integer, got ${K}`);
	return (360 * i) / K;
}

/**
 * A CSS colour for phase state i of K. OKLCH keeps the lightness equal around the wheel, so no
 * state looks more alarming than another; the hue angle is the one `hue` gives.
 */
export function stateColor(i: number, K: number, lightness = 0.72, chroma = 0.13): string {
	return `oklch(${lightness} ${chroma} ${hue(i, K).toFixed(1)})`;
}

/** The phase of state i as the agent indexes them (increasing phase from the pump reference), radians. */
export function statePhase_rad(i: number, K: number): number {
	return (2 * Math.PI * i) / K;
}
