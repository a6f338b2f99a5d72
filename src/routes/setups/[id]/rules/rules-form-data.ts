// The rules form's inputs: their names (the dotted paths issues use), reading a submitted form back
// into a draft, and the add/remove row buttons that work without JavaScript.
import { rowDraft, type Draft, type DraftValue } from './rules-draft';
import type { FieldSpec, KindSpec } from './rule-specs';

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
