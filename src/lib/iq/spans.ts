// The spans the run page offers for its phase-space picture (?iq_span=), shared by the loader and the picker.
export const IQ_SPANS = [
	{ value: '15m', label: 'last 15 min', ms: 15 * 60_000 },
	{ value: '1h', label: 'last hour', ms: 3_600_000 },
	{ value: '6h', label: 'last 6 hours', ms: 6 * 3_600_000 },
	{ value: '24h', label: 'last 24 hours', ms: 24 * 3_600_000 },
	{ value: 'all', label: 'whole run', ms: null }
] as const;

export type IqSpanChoice = (typeof IQ_SPANS)[number];

/** The chosen span, the last hour when the URL names none (or one not offered). */
export const iqSpanOf = (value: string | null): IqSpanChoice => IQ_SPANS.find((s) => s.value === value) ?? IQ_SPANS[1];
