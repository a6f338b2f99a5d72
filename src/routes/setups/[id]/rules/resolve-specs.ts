// The rule kinds and fields the form shows: the descriptions of rule-specs.ts, kept to the fields the
// schema has now, plus plain inputs for any field or kind the schema has that is not described yet.
import { defaultRules } from '$lib/detect/rules';
import { KIND_SPECS, type KindSpec, type ListSpec } from './rule-specs';
import { fieldSchema, genericField, humanize, listItemKeys, schemaKeys } from './schema-fields';

/** The list of a described kind, its fields kept to the item keys the schema has. */
function resolveList(kind: string, l: ListSpec): ListSpec {
	const itemKeys = listItemKeys(kind, l.key);
	if (!itemKeys) return l;
	const described = new Set(l.fields.map((f) => f.key));
	const blankRow = l.blank();
	return {
		...l,
		fields: [
			...l.fields.filter((f) => itemKeys.includes(f.key)),
			...itemKeys.filter((k) => !described.has(k)).map((k) => genericField(k, blankRow[k] ?? '', fieldSchema(kind, l.key, k)))
		]
	};
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
			...keys
				.filter((k) => k !== 'enabled' && k !== 'version' && !described.has(k))
				.map((k) => genericField(k, sample[k], fieldSchema(kind, k)))
		];
		const list = known?.list && keys.includes(known.list.key) ? resolveList(kind, known.list) : undefined;
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
