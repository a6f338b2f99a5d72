// A rule set as a person edits it (the draft: `enabled`, fields as text, list rows) and back: what the
// text stands for, or which field's text is not even a value (not a number, not a pair).
import { defaultRules } from '$lib/detect/rules';
import type { FieldSpec, KindSpec, ListSpec } from './rule-specs';

export type DraftValue = string | boolean | string[];
export type DraftRow = Record<string, DraftValue>;
/** One rule as edited: `enabled` and the fields as text, its list rows, and the version it came from. */
export type KindDraft = { fields: Record<string, DraftValue>; rows: DraftRow[] | null; version: number };
export type Draft = Record<string, KindDraft>;

/** A problem named by the field's dotted path (`lock_lost.threshold`, `aux_limit.limits.0.above`). */
export type FieldIssues = Record<string, string>;

// ---- rule set → draft -------------------------------------------------------------------------

function numberText(v: unknown): string {
	if (typeof v !== 'number' || !Number.isFinite(v)) return '';
	return String(v);
}

function pairsText(pairs: unknown): string {
	return Array.isArray(pairs) ? pairs.map((p) => (Array.isArray(p) ? p.join('–') : String(p))).join(', ') : '';
}

function toDraftValue(spec: FieldSpec, v: unknown): DraftValue {
	switch (spec.type) {
		case 'number':
			return numberText(v);
		case 'boolean':
			return v === true;
		case 'choice':
			return spec.options.find((o) => JSON.stringify(o.json) === JSON.stringify(v))?.value ?? String(v ?? '');
		case 'multi':
			return Array.isArray(v) ? v.map(String) : [];
		case 'pairs':
			// Stored as "neighbours" | "all" | "0–1, 2–3"; the mode and the list share one text.
			return typeof v === 'string' ? v : pairsText(v);
		case 'text':
			return typeof v === 'string' ? v : '';
		case 'json':
			return v === undefined ? '' : JSON.stringify(v);
	}
}

export function rowDraft(list: ListSpec, item: Record<string, unknown> = {}): DraftRow {
	const row: DraftRow = {};
	const full = { ...list.blank(), ...item };
	for (const f of list.fields) row[f.key] = toDraftValue(f, full[f.key]);
	return row;
}

export function toDraft(rules: Record<string, unknown>, specs: KindSpec[]): Draft {
	const draft: Draft = {};
	const defaults = defaultRules() as unknown as Record<string, Record<string, unknown>>;
	for (const spec of specs) {
		const rule = { ...defaults[spec.kind], ...((rules[spec.kind] as Record<string, unknown>) ?? {}) };
		const fields: Record<string, DraftValue> = { enabled: rule.enabled !== false };
		for (const f of spec.fields) fields[f.key] = toDraftValue(f, rule[f.key]);
		let rows: DraftRow[] | null = null;
		if (spec.list) {
			const items = Array.isArray(rule[spec.list.key]) ? (rule[spec.list.key] as Record<string, unknown>[]) : [];
			rows = items.map((item) => rowDraft(spec.list!, item));
		}
		draft[spec.kind] = { fields, rows, version: typeof rule.version === 'number' ? rule.version : 1 };
	}
	return draft;
}

// ---- draft → rule set ------------------------------------------------------------------------

type Parsed = { ok: true; value: unknown; omit?: boolean } | { ok: false; message: string };

function parseNumber(text: string, spec: Extract<FieldSpec, { type: 'number' }>): Parsed {
	const t = text
		.trim()
		.replace(/\u2212/g, '-')
		.replace(/\s+/g, '');
	if (t === '') return spec.optional ? { ok: true, value: undefined, omit: true } : { ok: false, message: 'enter a number' };
	const n = Number(t);
	if (!Number.isFinite(n)) return { ok: false, message: `“${text.trim()}” is not a number` };
	return { ok: true, value: n };
}

function parsePairs(text: string): Parsed {
	const t = text.trim();
	if (t === 'neighbours' || t === 'all') return { ok: true, value: t };
	if (t === '') return { ok: false, message: 'list at least one pair, e.g. 0–1, 1–2' };
	const pairs: [number, number][] = [];
	for (const part of t
		.split(/[,;]/)
		.map((p) => p.trim())
		.filter(Boolean)) {
		const m = /^(\d+)\s*(?:[-–—:]|↔)\s*(\d+)$/.exec(part);
		if (!m) return { ok: false, message: `“${part}” is not a pair like 0–1` };
		pairs.push([Number(m[1]), Number(m[2])]);
	}
	return { ok: true, value: pairs };
}

function fromDraftValue(spec: FieldSpec, v: DraftValue): Parsed {
	switch (spec.type) {
		case 'number':
			return parseNumber(typeof v === 'string' ? v : String(v), spec);
		case 'boolean':
			return { ok: true, value: v === true || v === 'true' || v === 'on' };
		case 'choice': {
			const o = spec.options.find((x) => x.value === v);
			return o ? { ok: true, value: o.json } : { ok: false, message: `choose one of ${spec.options.map((x) => x.label).join(', ')}` };
		}
		case 'multi':
			return { ok: true, value: Array.isArray(v) ? v : typeof v === 'string' && v ? [v] : [] };
		case 'pairs':
			return parsePairs(String(v));
		case 'text':
			return { ok: true, value: String(v).trim() };
		case 'json': {
			const t = String(v).trim();
			if (t === '') return { ok: true, value: undefined, omit: true };
			try {
				return { ok: true, value: JSON.parse(t) };
			} catch {
				return { ok: false, message: 'is not valid JSON' };
			}
		}
	}
}

/** A row left wholly empty (no name, no limits) is not a row: it was added and never filled in. */
export function isBlankRow(list: ListSpec, row: DraftRow): boolean {
	return list.fields.every((f) => {
		// Counts and choices start filled in; only names and limits say someone meant a row.
		if (f.type === 'text' || (f.type === 'number' && f.optional)) return String(row[f.key] ?? '').trim() === '';
		return true;
	});
}

/** The rule set a draft stands for, and the fields whose text is not even a value (not a number…). */
export function fromDraft(draft: Draft, specs: KindSpec[]): { rules: Record<string, unknown>; issues: FieldIssues } {
	const rules: Record<string, unknown> = {};
	const issues: FieldIssues = {};
	for (const spec of specs) {
		const d = draft[spec.kind];
		if (!d) continue;
		const rule: Record<string, unknown> = { enabled: d.fields.enabled === true || d.fields.enabled === 'true', version: d.version };
		for (const f of spec.fields) {
			const p = fromDraftValue(f, d.fields[f.key] ?? '');
			if (!p.ok) issues[`${spec.kind}.${f.key}`] = p.message;
			else if (!p.omit) rule[f.key] = p.value;
		}
		if (spec.list) {
			const items: Record<string, unknown>[] = [];
			(d.rows ?? []).forEach((row, i) => {
				if (isBlankRow(spec.list!, row)) return;
				const item: Record<string, unknown> = {};
				for (const f of spec.list!.fields) {
					const p = fromDraftValue(f, row[f.key] ?? '');
					if (!p.ok) issues[`${spec.kind}.${spec.list!.key}.${i}.${f.key}`] = p.message;
					else if (!p.omit) item[f.key] = p.value;
				}
				items.push(item);
			});
			rule[spec.list.key] = items;
		}
		rules[spec.kind] = rule;
	}
	return { rules, issues };
}
