// How the summary and the morning report put numbers into words: times in the lab's time zone
// (Intl), p-values, rate verdicts. Shared by the components and the plain-text e-mail.
import { hourMinuteText, zonedParts } from '../ui/zoned-time';
import type { RateComparison } from './rates';

const pad = (n: number) => String(n).padStart(2, '0');

/** "2026-12-01 07:42" in the given IANA time zone. */
export function formatInZone(ms: number | null | undefined, timeZone: string): string {
	if (ms == null || !Number.isFinite(ms)) return '—';
	const p = zonedParts(ms, timeZone);
	return `${p.year}-${pad(p.month)}-${pad(p.day)} ${hourMinuteText(p)}`;
}

export function formatP(p: number | null | undefined): string {
	if (p == null || !Number.isFinite(p)) return '—';
	if (p >= 0.01) return p.toFixed(2);
	if (p >= 1e-4) return p.toPrecision(2);
	return '< 0.0001';
}

/** "p = 0.03" or "p < 0.0001". */
export function pText(p: number | null | undefined): string {
	const f = formatP(p);
	return f.startsWith('<') ? `p ${f}` : `p = ${f}`;
}

/** A sentence on a rate against its prediction. */
export function rateSentence(what: string, r: RateComparison, fmt: (x: number | null) => string): string {
	if (r.verdict === 'no exposure') return `No ${what} exposure in this span.`;
	const seen = `${r.count} ${what} events in ${Math.round(r.exposure_s)} s: ${fmt(r.rate_per_s)} /s (${Math.round(r.confidence * 100)} % interval ${fmt(r.interval_per_s!.lower)}–${fmt(r.interval_per_s!.upper)} /s)`;
	if (r.verdict === 'no prediction') return `${seen}; no rate model to compare with.`;
	const against = `predicted ${fmt(r.expected_rate_per_s)} /s`;
	if (r.verdict === 'as predicted') return `${seen}, as ${against} (${pText(r.pValue)}).`;
	return `${seen}, ${r.verdict === 'above prediction' ? 'above' : 'below'} the ${against} (${pText(r.pValue)}).`;
}
