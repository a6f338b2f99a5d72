// Summed IQ histograms of the output field and where the phase-state lobes sit in them. Written by
// hand: a sum of same-shaped count arrays and a few weighted means need no package.
//
// A frame's `iq` is an N×N histogram over −E…+E in both quadratures, counts[row·N + column] with
// column the I bin and row the Q bin, each counted from −E upward (agent/PROTOCOL.md).
export type IqHistogram = { bins: number; extent: number; counts: number[] };

export type IqSum = IqHistogram & {
	/** Frames whose histograms were added. */
	frames: number;
	/** Frames left out because their grid (bins or extent) differed from the first one's. */
	mismatched: number;
	total: number;
};

/** Adds histograms on the grid of the first one; others are counted as mismatched, never rebinned. */
export function sumIq(histograms: Iterable<IqHistogram | null | undefined>): IqSum | null {
	let sum: IqSum | null = null;
	for (const h of histograms) {
		if (!h) continue;
		if (!Number.isInteger(h.bins) || h.bins < 1 || h.counts.length !== h.bins * h.bins) {
			throw new RangeError(`iq: a histogram of ${h.bins} bins a side must have ${h.bins * h.bins} counts, got ${h.counts.length}`);
		}
		if (!sum) {
			sum = { bins: h.bins, extent: h.extent, counts: [...h.counts], frames: 1, mismatched: 0, total: 0 };
			continue;
		}
		if (h.bins !== sum.bins || h.extent !== sum.extent) {
			sum.mismatched += 1;
			continue;
		}
		for (let i = 0; i < h.counts.length; i++) sum.counts[i] += h.counts[i];
		sum.frames += 1;
	}
	if (sum) sum.total = sum.counts.reduce((a, b) => a + b, 0);
	return sum;
}

/** The centre of bin (column, row) in field units. */
export function binCentre(h: Pick<IqHistogram, 'bins' | 'extent'>, column: number, row: number): { i: number; q: number } {
	const width = (2 * h.extent) / h.bins;
	return { i: -h.extent + (column + 0.5) * width, q: -h.extent + (row + 0.5) * width };
}

export type Lobe = { state: number; angle_rad: number; i: number; q: number; counts: number };

/**
 * The K phase states' lobes: state k sits at angle 2πk/K (statePhase_rad in ui/hue.ts). Each
 * lobe's centre is the count-weighted mean of the bins in its sector (within ±π/K of that angle),
 * leaving out the vacuum blob at the centre: bins closer than half the mean amplitude of the
 * field. A sector with no counts gets its nominal angle at the mean amplitude.
 */
export function lobeCentres(h: IqHistogram, K: number): Lobe[] {
	if (!Number.isInteger(K) || K < 1) throw new RangeError(`iq: K must be a positive integer, got ${K}`);
	let weight = 0;
	let radius = 0;
	for (let row = 0; row < h.bins; row++) {
		for (let col = 0; col < h.bins; col++) {
			const c = h.counts[row * h.bins + col];
			if (!c) continue;
			const { i, q } = binCentre(h, col, row);
			weight += c;
			radius += c * Math.hypot(i, q);
		}
	}
	const meanR = weight > 0 ? radius / weight : h.extent / 2;
	const sums = Array.from({ length: K }, () => ({ w: 0, i: 0, q: 0, r: 0 }));
	for (let row = 0; row < h.bins; row++) {
		for (let col = 0; col < h.bins; col++) {
			const c = h.counts[row * h.bins + col];
			if (!c) continue;
			const { i, q } = binCentre(h, col, row);
			const r = Math.hypot(i, q);
			if (r < meanR / 2) continue;
			const angle = Math.atan2(q, i);
			const k = ((Math.round((angle * K) / (2 * Math.PI)) % K) + K) % K;
			sums[k].w += c;
			sums[k].i += c * i;
			sums[k].q += c * q;
			sums[k].r += c * r;
		}
	}
	const outerR =
		sums.reduce((a, s) => a + s.r, 0) /
		Math.max(
			1,
			sums.reduce((a, s) => a + s.w, 0)
		);
	return sums.map((s, k) => {
		const nominal = (2 * Math.PI * k) / K;
		if (s.w === 0) return { state: k, angle_rad: nominal, i: outerR * Math.cos(nominal), q: outerR * Math.sin(nominal), counts: 0 };
		const i = s.i / s.w;
		const q = s.q / s.w;
		return { state: k, angle_rad: Math.atan2(q, i), i, q, counts: s.w };
	});
}
