// Pan and zoom arithmetic, the URL's view, the link helper and the rate points of the rate tracks.
import { describe, expect, it } from 'vitest';
import { ratePoint } from '../../../src/lib/timeline/rates';
import { timeTicks } from '../../../src/lib/timeline/ticks';
import { brushed, clampView, MIN_VIEW_MS, pan, viewFromParams, zoom } from '../../../src/lib/timeline/view';
import { timelineAround, timelineHref } from '../../../src/lib/ui/links';

const T0 = 1_798_761_600_000;
const v = { from_ms: T0, to_ms: T0 + 3_600_000 };

describe('view arithmetic', () => {
	it('zooms about the anchor, keeping the time under it in place', () => {
		const z = zoom(v, 0.5, 0.25);
		expect(z).toEqual({ from_ms: T0 + 450_000, to_ms: T0 + 2_250_000 });
		// The time a quarter across stays a quarter across.
		expect(z.from_ms + 0.25 * (z.to_ms - z.from_ms)).toBe(T0 + 900_000);
	});

	it('pans by a fraction of the width and stays inside the bounds', () => {
		expect(pan(v, 0.5)).toEqual({ from_ms: T0 + 1_800_000, to_ms: T0 + 5_400_000 });
		const bounds = { from_ms: T0, to_ms: T0 + 4_000_000 };
		expect(pan(v, 0.5, bounds)).toEqual({ from_ms: T0 + 400_000, to_ms: T0 + 4_000_000 });
		expect(pan(v, -1, bounds)).toEqual(v);
		expect(zoom(v, 10, 0.5, bounds)).toEqual(bounds);
	});

	it('never narrows below the minimum view, and brushes in either direction', () => {
		expect(clampView({ from_ms: T0, to_ms: T0 + 10 }).to_ms - clampView({ from_ms: T0, to_ms: T0 + 10 }).from_ms).toBe(MIN_VIEW_MS);
		expect(brushed(v, 0.75, 0.25)).toEqual({ from_ms: T0 + 900_000, to_ms: T0 + 2_700_000 });
		expect(brushed(v, -1, 2)).toEqual(v);
	});

	it('reads the URL view only when both ends are whole and in order', () => {
		expect(viewFromParams(new URLSearchParams(`from_ms=${T0}&to_ms=${T0 + 1000}`))).toEqual({ from_ms: T0, to_ms: T0 + 1000 });
		expect(viewFromParams(new URLSearchParams(`from_ms=${T0}`))).toBeNull();
		expect(viewFromParams(new URLSearchParams(`from_ms=${T0}&to_ms=${T0}`))).toBeNull();
		expect(viewFromParams(new URLSearchParams('from_ms=a&to_ms=5'))).toBeNull();
	});
});

describe('timelineHref', () => {
	it('links the whole run or a span, whole ms outward', () => {
		expect(timelineHref('run 1')).toBe('/runs/run%201/timeline');
		expect(timelineHref('r', 10.5, 20.2)).toBe('/runs/r/timeline?from_ms=10&to_ms=21');
		expect(timelineHref('r', 20, 10)).toBe('/runs/r/timeline');
		expect(timelineHref('r', 10, null)).toBe('/runs/r/timeline');
		expect(timelineAround('r', 1_000_000, 1000, 2000)).toBe('/runs/r/timeline?from_ms=999000&to_ms=1002000');
	});
});

describe('ticks', () => {
	it('fall on round steps inside the view, at most about the target count', () => {
		const ticks = timeTicks(v, 6, 'UTC');
		expect(ticks.length).toBeGreaterThan(2);
		expect(ticks.length).toBeLessThanOrEqual(7);
		const step = ticks[1].t_ms - ticks[0].t_ms;
		expect(step).toBe(10 * 60_000); // an hour in at most 6 steps: ten minutes
		for (const t of ticks) {
			expect(t.t_ms % step).toBe(0);
			expect(t.t_ms).toBeGreaterThanOrEqual(v.from_ms);
			expect(t.t_ms).toBeLessThanOrEqual(v.to_ms);
		}
	});
});

describe('ratePoint', () => {
	it('divides the exact Poisson limits by the exposure', () => {
		// Garwood limits for n = 10 at 95 %: 4.795 and 18.39 (Gehrels 1986, ApJ 303:336, Table 3 two-sided).
		const p = ratePoint(10, 2, 8, { lower: 6, upper: 10 })!;
		expect(p.rate_per_s).toBe(5);
		expect(p.lower_per_s).toBeCloseTo(4.795 / 2, 3);
		expect(p.upper_per_s).toBeCloseTo(18.39 / 2, 2);
		expect(p.expected_per_s).toBe(4);
		expect(p.band).toEqual({ lower_per_s: 3, upper_per_s: 5 });
		expect(ratePoint(3, 0, null, null)).toBeNull();
	});
});
