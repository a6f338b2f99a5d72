// The rules form checked with the very schema the server uses, and problems put beside the input they
// belong to: schema issues and superforms' errors come as paths of the rule set, which differ from
// the draft's where blank list rows were dropped.
import { checkRulesAgainstRun, detectorRulesSchema, type DetectorRules } from '$lib/detect/rules';
import { fromDraft, isBlankRow, type Draft, type FieldIssues } from './rules-draft';
import type { KindSpec } from './rule-specs';

/** Every field key the form has, to find the one an issue belongs to. */
export function fieldKeys(draft: Draft, specs: KindSpec[]): Set<string> {
	const keys = new Set<string>();
	for (const spec of specs) {
		keys.add(`${spec.kind}.enabled`);
		for (const f of spec.fields) keys.add(`${spec.kind}.${f.key}`);
		if (spec.list) {
			keys.add(`${spec.kind}.${spec.list.key}`);
			(draft[spec.kind]?.rows ?? []).forEach((_, i) =>
				spec.list!.fields.forEach((f) => keys.add(`${spec.kind}.${spec.list!.key}.${i}.${f.key}`))
			);
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

/** For each list (`aux_limit.limits`), the draft rows kept in the rule set, in order. */
function keptRows(draft: Draft, specs: KindSpec[]): Map<string, number[]> {
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

/** A path in the rule set → the same place in the draft (list indices mapped to draft rows). */
function toDraftPath(path: readonly PropertyKey[], rows: Map<string, number[]>): string {
	const parts = path.map(String);
	if (parts.length >= 3) {
		const kept = rows.get(`${parts[0]}.${parts[1]}`);
		const i = Number(parts[2]);
		if (kept && Number.isInteger(i) && kept[i] !== undefined) parts[2] = String(kept[i]);
	}
	return parts.join('.');
}

/** A draft field key → its path in the rule set (draft row → index among the kept rows). */
export function toRulesPath(key: string, draft: Draft, specs: KindSpec[]): string {
	const parts = key.split('.');
	if (parts.length >= 3) {
		const kept = keptRows(draft, specs).get(`${parts[0]}.${parts[1]}`);
		const i = kept?.indexOf(Number(parts[2])) ?? -1;
		if (i >= 0) parts[2] = String(i);
	}
	return parts.join('.');
}

/** Messages by the form's field keys, from issues given as paths of the rule set (first one wins). */
export function placeIssues(
	found: { path: readonly PropertyKey[]; message: string }[],
	draft: Draft,
	specs: KindSpec[],
	into: FieldIssues = {}
): FieldIssues {
	const keys = fieldKeys(draft, specs);
	const rows = keptRows(draft, specs);
	for (const { path, message } of found) {
		const key = nearestField(toDraftPath(path, rows), keys) || '(rules)';
		if (!(key in into)) into[key] = message;
	}
	return into;
}

/** superforms' nested errors (`{ lock_lost: { threshold: ['…'] } }`, `_errors` for a list) as paths. */
export function errorPaths(errors: unknown, path: string[] = []): { path: string[]; message: string }[] {
	if (Array.isArray(errors)) return errors.filter((m) => typeof m === 'string').map((message) => ({ path, message }));
	if (!errors || typeof errors !== 'object') return [];
	return Object.entries(errors).flatMap(([key, inner]) => errorPaths(inner, key === '_errors' ? path : [...path, key]));
}

export type Validation = { ok: boolean; rules: Record<string, unknown>; issues: FieldIssues };

/**
 * Validates a draft with the shared schema, and, given the setup's number of phase states, with the
 * same check against the setup the server makes. Issues are keyed by their field (first one wins).
 */
export function validateDraft(draft: Draft, specs: KindSpec[], states?: number): Validation {
	const { rules, issues } = fromDraft(draft, specs);
	const result = detectorRulesSchema.safeParse(rules);
	// A field that is not even a number keeps that message; the schema's would only repeat it.
	if (!result.success) placeIssues(result.error.issues, draft, specs, issues);
	else if (states !== undefined) {
		const mismatch = checkRulesAgainstRun(result.data as DetectorRules, states);
		if (mismatch) placeIssues([{ path: mismatch.path.split('.'), message: mismatch.message }], draft, specs, issues);
	}
	return { ok: Object.keys(issues).length === 0, rules: result.success ? (result.data as Record<string, unknown>) : rules, issues };
}
