// The one root finder for run-length curves: the chart parameter that meets a target ARL.

/**
 * How to close the bracket: `false-position` for a continuous curve, `bisection` for a step
 * function (a count chart's ARL jumps with h), where false position would stall on a flat step.
 */
export type RootMethod = 'false-position' | 'bisection';

/**
 * The x > 0 with f(x) = target for an increasing f, by bracketing from `start` (doubling or
 * halving) and then closing the bracket on ln f − ln target.
 * - `false-position` (default): the Illinois variant, which converges superlinearly on the nearly
 *   exponential run-length curves of continuous charts. Stops when the bracket is narrower than
 *   relTol·x or ln f is within 1e-12 of ln target.
 * - `bisection`: for a nondecreasing step function, the smallest x with f(x) ≥ target, returned
 *   as the bracket's upper end (so f(x) ≥ target holds) once the bracket is narrower than relTol·x.
 */
export function solveIncreasing(
	f: (x: number) => number,
	target: number,
	start: number,
	relTol: number,
	what: string,
	method: RootMethod = 'false-position'
): number {
	const g = (x: number) => Math.log(f(x)) - Math.log(target);
	let a = start;
	let ga = g(a);
	let b = start;
	let gb = ga;
	if (ga < 0) {
		for (let i = 0; gb < 0; i++) {
			if (i > 60) throw new RangeError(`no ${what} reaches a run length of ${target}`);
			a = b;
			ga = gb;
			b *= 2;
			gb = g(b);
		}
	} else {
		for (let i = 0; ga >= 0; i++) {
			if (i > 60) {
				throw new RangeError(`every ${what} > 0 already gives a run length of at least ${target}: ask for a longer target run length`);
			}
			b = a;
			gb = ga;
			a /= 2;
			ga = g(a);
		}
	}
	if (method === 'bisection') {
		while (b - a > relTol * b) {
			const mid = (a + b) / 2;
			if (g(mid) >= 0) b = mid;
			else a = mid;
		}
		return b;
	}
	if (gb === 0) return b;
	let side = 0;
	for (let i = 0; i < 200; i++) {
		const c = b - (gb * (b - a)) / (gb - ga);
		const gc = g(c);
		if (Math.abs(gc) < 1e-12) return c;
		if (gc > 0) {
			b = c;
			gb = gc;
			if (side === 1) ga /= 2;
			side = 1;
		} else {
			a = c;
			ga = gc;
			if (side === -1) gb /= 2;
			side = -1;
		}
		if (b - a < relTol * b) return (a + b) / 2;
	}
	return (a + b) / 2;
}
