// The rules form as data: a rule set ⇄ the text a person edits ⇄ form fields named by dotted path,
// validated with the very schema the server uses, so messages appear beside the field they name.
import { checkRulesAgainstRun, defaultRules, detectorRulesSchema, type DetectorRules } from '$lib/detect/rules';
import { KIND_SPECS, type FieldSpec, type KindSpec, type ListSpec } from './rule-specs';

export type DraftValue = string | boolean | string[];
export type DraftRow = Record<string, DraftValue>;
/** One rule as edited: `enabled` and the fields as text, its list rows, and the version it came from. */
export type KindDraft = { fields: Record<string, DraftValue>; rows: DraftRow[] | null; version: number };
export type Draft = Record<string, KindDraft>;

/** A problem named by the field's dotted path (`lock_lost.threshold`, `aux_limit.limits.0.above`). */
export type FieldIssues = Record<string, string>;

type AnySchema = { def?: { type?: string; innerType?: AnySchema; in?: AnySchema; element?: AnySchema }; shape?: Record<string, AnySchema> };

function unwrap(s: AnySchema | undefined): AnySchema | undefined {
	let cur = s;
	for (let i = 0; i < 10 && cur?.def; i++) {
		const t = cur.def.type;
		if (t === 'prefault' || t === 'default' || t === 'optional' || t === 'nullable' || t === 'catch' || t === 'readonly') cur = cur.def.innerType;
		else if (t === 'pipe') cur = cur.def.in;
		else break;
	}
	return cur;
}

/** Field names of a rule kind as the schema defines them now (it grows while the product does). */
function schemaKeys(kind: string): string[] | null {
	const obj = unwrap((detectorRulesSchema as unknown as AnySchema).shape?.[kind]);
	return obj?.shape ? Object.keys(obj.shape) : null;
}

function listItemKeys(kind: string, key: string): string[] | null {
	const obj = unwrap((detectorRulesSchema as unknown as AnySchema).shape?.[kind]);
	const arr = unwrap(obj?.shape?.[key]);
	if (arr?.def?.type !== 'array') return null;
	const item = unwrap(arr.def.element);
	return item?.shape ? Object.keys(item.shape) : null;
}

const humanize = (key: string) =>
	key
		.replace(/_/g, ' ')
		.replace(/([a-z])([A-Z])/g, '$1 $2')
		.toLowerCase()
		.replace(/^./, (c) => c.toUpperCase());

function genericField(key: string, sample: unknown): FieldSpec {
	const label = humanize(key);
	if (typeof sample === 'boolean') return { key, type: 'boolean', label, hint: '' };
	if (typeof sample === 'number') return { key, type: 'number', label, hint: '' };
	if (typeof sample === 'string') return { key, type: 'text', label, hint: '' };
	return { key, type: 'json', label, hint: 'As JSON.' };
}

/**
 * The kinds to show, in order: the described ones first, then any the schema has that this page
 * does not describe yet. Fields are those the schema has now; a described field the schema no
 * longer has is left out (a strict schema would refuse it), an undescribed one appears plainly.
 */
export function resolveSpecs(rules: Record<string, unknown> = {}): KindSpec[] {
	const defaults = defaultRules() as unknown as Record<string, Record<string, unknown>>;
	const kinds = [...new Set([...KIND_SPECS.map((k) => k.kind), ...Object.keys(defaults)])].filter((k) => k in defaults);
	return kinds.map((kind) => {
		const known = KIND_SPECS.find((k) => k.kind === kind);
		const sample = { ...defaults[kind], ...((rules[kind] as Record<string, unknown>) ?? {}) };
		const keys = schemaKeys(kind) ?? Object.keys(sample);
		const described = new Set(known?.fields.map((f) => f.key) ?? []);
		if (known?.list) described.add(known.list.key);
		const fields = [
			...(known?.fields.filter((f) => keys.includes(f.key)) ?? []),
			...keys.filter((k) => k !== 'enabled' && k !== 'version' && !described.has(k)).map((k) => genericField(k, sample[k]))
		];
		let list: ListSpec | undefined;
		if (known?.list && keys.includes(known.list.key)) {
			const itemKeys = listItemKeys(kind, known.list.key);
			const l = known.list;
			const describedItems = new Set(l.fields.map((f) => f.key));
			const blankRow = l.blank();
			list = {
				...l,
				fields: itemKeys
					? [
							...l.fields.filter((f) => itemKeys.includes(f.key)),
							...itemKeys.filter((k) => !describedItems.has(k)).map((k) => genericField(k, blankRow[k] ?? ''))
						]
					: l.fields
			};
		}
		return {
			kind,
			title: known?.title ?? humanize(kind),
			severity: known?.severity ?? '',
			explanation: known?.explanation ?? '',
			fields,
			list
		};
	});
}

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

export function toDraft(rules: Record<string, unknown>, specs: KindSpec[] = resolveSpecs(rules)): Draft {
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

export function rowDraft(list: ListSpec, item: Record<string, unknown> = {}): DraftRow {
	const row: DraftRow = {};
	const full = { ...list.blank(), ...item };
	for (const f of list.fields) row[f.key] = toDraftValue(f, full[f.key]);
	return row;
}

// ---- draft → rule set ------------------------------------------------------------------------

type Parsed = { ok: true; value: unknown; omit?: boolean } | { ok: false; message: string };

function parseNumber(text: string, spec: Extract<FieldSpec, { type: 'number' }>): Parsed {
	const t = text.trim().replace(/\u2212/g, '-').replace(/\s+/g, '');
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
	for (const part of t.split(/[,;]/).map((p) => p.trim()).filter(Boolean)) {
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
function isBlankRow(list: ListSpec, row: DraftRow): boolean {
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

/** Every field key the form has, to find the one a schema issue belongs to. */
export function fieldKeys(draft: Draft, specs: KindSpec[]): Set<string> {
	const keys = new Set<string>();
	for (const spec of specs) {
		keys.add(`${spec.kind}.enabled`);
		for (const f of spec.fields) keys.add(`${spec.kind}.${f.key}`);
		if (spec.list) {
			keys.add(`${spec.kind}.${spec.list.key}`);
			(draft[spec.kind]?.rows ?? []).forEach((_, i) => spec.list!.fields.forEach((f) => keys.add(`${spec.kind}.${spec.list!.key}.${i}.${f.key}`)));
		}
	}
	return keys;
}

/** The nearest field of a dotted path: `occupancy_imbalance.expectedPairs.0.1` → `…expectedPairs`. */
export function nearestField(path: string, keys: Set<string>): string {
	const parts = path.split('.');
	for (let n = parts.length; n > 0; n--) {
		const candidate = parts.slice(0, n).join('.');
		if (keys.has(candidate)) return candidate;
	}
	return parts[0] ?? '';
}

/**
 * Blank rows are dropped before validation, so list indices of the rules and of the draft can
 * differ; this maps a rules index back to its draft row.
 */
function rowIndexMap(draft: Draft, specs: KindSpec[]): Map<string, number[]> {
	const map = new Map<string, number[]>();
	for (const spec of specs) {
		if (!spec.list) continue;
		const kept: number[] = [];
		(draft[spec.kind]?.rows ?? []).forEach((row, i) => {
			if (!isBlankRow(spec.list!, row)) kept.push(i);
		});
		map.set(`${spec.kind}.${spec.list.key}`, kept);
	}
	return map;
}

function toDraftPath(path: (string | number)[], rows: Map<string, number[]>): string {
	const parts = path.map(String);
	if (parts.length >= 3) {
		const kept = rows.get(`${parts[0]}.${parts[1]}`);
		const i = Number(parts[2]);
		if (kept && Number.isInteger(i) && kept[i] !== undefined) parts[2] = String(kept[i]);
	}
	return parts.join('.');
}

export type Validation = { ok: boolean; rules: Record<string, unknown>; issues: FieldIssues };

/**
 * Validates a draft with the shared schema, and, given the setup's number of phase states, with the
 * same check against the setup the server makes. Issues are keyed by their field (first one wins).
 */
export function validateDraft(draft: Draft, specs: KindSpec[], states?: number): Validation {
	const { rules, issues } = fromDraft(draft, specs);
	const keys = fieldKeys(draft, specs);
	const rows = rowIndexMap(draft, specs);
	const result = detectorRulesSchema.safeParse(rules);
	if (!result.success) {
		for (const issue of result.error.issues) {
			const key = nearestField(toDraftPath(issue.path as (string | number)[], rows), keys) || '(rules)';
			// A field that is not even a number keeps that message; the schema's would only repeat it.
			if (!(key in issues)) issues[key] = issue.message;
		}
	} else if (states !== undefined) {
		const mismatch = checkRulesAgainstRun(result.data as DetectorRules, states);
		if (mismatch) {
			const key = nearestField(toDraftPath(mismatch.path.split('.'), rows), keys);
			if (!(key in issues)) issues[key] = mismatch.message;
		}
	}
	return { ok: Object.keys(issues).length === 0, rules: result.success ? (result.data as Record<string, unknown>) : rules, issues };
}

/**
 * The field an API message names, in the form's dotted spelling: "aux_limit.limits[1].above: …" and
 * "detector rules: lock_lost.threshold: …" both name a field; a message without one stays whole.
 */
export function messageField(message: string, draft: Draft, specs: KindSpec[]): { field: string | null; text: string } {
	const m = /^(?:detector rules:\s*)?([A-Za-z_][\w.[\]]*)\s*:\s*(.+)$/s.exec(message.trim());
	if (!m) return { field: null, text: message };
	const path = m[1].replace(/\[(\d+)\]/g, '.$1').replace(/^rules\./, '');
	const keys = fieldKeys(draft, specs);
	const kinds = new Set(specs.map((s) => s.kind));
	if (!kinds.has(path.split('.')[0])) return { field: null, text: message };
	return { field: nearestField(toDraftPath(path.split('.'), rowIndexMap(draft, specs)), keys), text: m[2] };
}

// ---- form fields -------------------------------------------------------------------------------

/** The name of a field's input; the same dotted path its issues use. */
export const fieldName = (kind: string, key: string) => `${kind}.${key}`;
export const rowFieldName = (kind: string, list: string, i: number, key: string) => `${kind}.${list}.${i}.${key}`;

function readValue(spec: FieldSpec, form: FormData, name: string): DraftValue | undefined {
	if (spec.type === 'pairs') {
		// A choice of graph, and the list's text only when the choice is "listed".
		const mode = form.get(`${name}.mode`);
		if (mode === 'neighbours' || mode === 'all') return mode;
		if (mode === 'list') return String(form.get(name) ?? '');
	}
	const all = form.getAll(name).map((v) => (typeof v === 'string' ? v : ''));
	if (all.length === 0) return undefined;
	if (spec.type === 'multi') return all.filter((v) => v !== '');
	// Checkboxes come after a hidden "false" of the same name: the last value is the one that counts.
	if (spec.type === 'boolean') return all.at(-1) === 'true';
	return all.at(-1) ?? '';
}

/**
 * A draft from a submitted form. Fields the form did not carry keep the value of `base` (the rules
 * in force), so a form that leaves a kind out does not reset it to defaults.
 */
export function draftFromForm(form: FormData, specs: KindSpec[], base: Draft): Draft {
	const draft: Draft = structuredClone(base);
	for (const spec of specs) {
		const d = draft[spec.kind];
		if (!d) continue;
		const enabled = readValue({ key: 'enabled', type: 'boolean', label: '', hint: '' }, form, fieldName(spec.kind, 'enabled'));
		if (enabled !== undefined) d.fields.enabled = enabled;
		const version = Number(form.get(fieldName(spec.kind, 'version')));
		if (Number.isInteger(version) && version >= 1) d.version = version;
		for (const f of spec.fields) {
			const v = readValue(f, form, fieldName(spec.kind, f.key));
			if (v !== undefined) d.fields[f.key] = v;
		}
		if (spec.list) {
			const count = Number(form.get(`${spec.kind}.${spec.list.key}.count`));
			if (Number.isInteger(count) && count >= 0) {
				d.rows = Array.from({ length: count }, (_, i) => {
					const row = rowDraft(spec.list!);
					for (const f of spec.list!.fields) {
						const v = readValue(f, form, rowFieldName(spec.kind, spec.list!.key, i, f.key));
						row[f.key] = v ?? row[f.key];
					}
					return row;
				});
			}
		}
	}
	return draft;
}

/** Whether a field's text stands for a different value than the saved one (2 and 2.0 are the same). */
export function sameValue(spec: FieldSpec, a: DraftValue | undefined, b: DraftValue | undefined): boolean {
	if (spec.type === 'number') {
		const x = String(a ?? '').trim();
		const y = String(b ?? '').trim();
		return x === y || (x !== '' && y !== '' && Number(x) === Number(y));
	}
	if (spec.type === 'multi') return JSON.stringify([...((a as string[]) ?? [])].sort()) === JSON.stringify([...((b as string[]) ?? [])].sort());
	return JSON.stringify(a) === JSON.stringify(b);
}

/** Fields (dotted paths) whose draft differs from the saved draft; a changed list counts once. */
export function changedFields(draft: Draft, saved: Draft, specs: KindSpec[]): Set<string> {
	const changed = new Set<string>();
	for (const spec of specs) {
		const d = draft[spec.kind];
		const s = saved[spec.kind];
		if (!d || !s) continue;
		if (d.fields.enabled !== s.fields.enabled) changed.add(fieldName(spec.kind, 'enabled'));
		for (const f of spec.fields) if (!sameValue(f, d.fields[f.key], s.fields[f.key])) changed.add(fieldName(spec.kind, f.key));
		if (spec.list) {
			const keep = (rows: DraftRow[] | null) => (rows ?? []).filter((r) => !isBlankRow(spec.list!, r));
			const a = keep(d.rows);
			const b = keep(s.rows);
			const differs = a.length !== b.length || a.some((row, i) => spec.list!.fields.some((f) => !sameValue(f, row[f.key], b[i][f.key])));
			if (differs) changed.add(`${spec.kind}.${spec.list.key}`);
		}
	}
	return changed;
}

/**
 * What a rule cannot do for want of a rate model: the rate rules compare with a prediction and
 * stay idle for a process without a model (switching_burst also tests escapes when locked).
 */
export function idleNotes(models: { switching: unknown; escape: unknown }): Record<string, string> {
	const notes: Record<string, string> = {};
	if (!models.switching && !models.escape) {
		notes.switching_burst = 'This setup has no rate model yet, so this rule is idle until one is saved below.';
		notes.rate_drift = notes.switching_burst;
	} else if (!models.switching) {
		notes.switching_burst = 'No switching model yet: only escapes are tested (when the run is meant to stay locked).';
		notes.rate_drift = 'No switching model yet: the switching chart is idle.';
	} else if (!models.escape) {
		notes.rate_drift = 'No escape model yet: an escape chart, if watched, stays idle.';
	}
	return notes;
}

/**
 * Applies an "add row" or "remove row" button of a list rule (the form without JavaScript) to the
 * draft. Returns true when the form was such a round trip rather than a submit.
 */
export function applyRowEdit(form: FormData, specs: KindSpec[], draft: Draft): boolean {
	const add = form.get('addRow');
	const remove = form.get('removeRow');
	if (typeof add !== 'string' && typeof remove !== 'string') return false;
	const [kind, , index] = String(add ?? remove).split('.');
	const spec = specs.find((s) => s.kind === kind);
	const rows = draft[kind]?.rows;
	if (spec?.list && rows) {
		if (typeof add === 'string') rows.push(rowDraft(spec.list));
		else rows.splice(Number(index), 1);
	}
	return true;
}
