// Order statistics of timing samples; simple-statistics does the quantiles.
import { quantileSorted } from 'simple-statistics';

export function percentile(samples: readonly number[], p: number): number {
	if (samples.length === 0) return NaN;
	return quantileSorted(
		[...samples].sort((a, b) => a - b),
		p
	);
}

export const median = (samples: readonly number[]) => percentile(samples, 0.5);
