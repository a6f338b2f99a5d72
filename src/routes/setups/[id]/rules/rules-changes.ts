// What a draft changes against the rules in force, and what a rule cannot do for want of a rate model.
import { isBlankRow, type Draft, type DraftRow, type DraftValue } from './rules-draft';
import { fieldName } from './rules-form-data';
import type { FieldSpec, KindSpec } from './rule-specs';

/** Whether a field's text stands for a different value than the saved one (2 and 2.0 are the same). */
export function sameValue(spec: FieldSpec, a: DraftValue | undefined, b: DraftValue | undefined): boolean {
	if (spec.type === 'number') {
		const x = String(a ?? '').trim();
		const y = String(b ?? '').trim();
		return x === y || (x !== '' && y !== '' && Number(x) === Number(y));
	}
	if (spec.type === 'multi')
		return JSON.stringify([...((a as string[]) ?? [])].sort()) === JSON.stringify([...((b as string[]) ?? [])].sort());
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
