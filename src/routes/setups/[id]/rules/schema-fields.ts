// What the rules schema says about its fields, read from its JSON Schema (z.toJSONSchema) rather than
// from zod's internals: the keys of each rule and list item, and a plain input for a field this page
// does not describe yet (its type, whole-number flag and bounds).
import { z } from 'zod';
import { detectorRulesSchema } from '$lib/detect/rules';
import type { FieldSpec } from './rule-specs';

type JsonSchema = {
	type?: string | string[];
	properties?: Record<string, JsonSchema>;
	items?: JsonSchema | false;
	minimum?: number;
	maximum?: number;
	exclusiveMinimum?: number;
	exclusiveMaximum?: number;
	description?: string;
};

// The input side: defaults make fields optional there, which is what a form submits.
const RULES_JSON = z.toJSONSchema(detectorRulesSchema, { io: 'input', unrepresentable: 'any' }) as JsonSchema;

const ruleSchema = (kind: string): JsonSchema | undefined => RULES_JSON.properties?.[kind];

/** Field names of a rule kind as the schema defines them now (it grows while the product does). */
export function schemaKeys(kind: string): string[] | null {
	const props = ruleSchema(kind)?.properties;
	return props ? Object.keys(props) : null;
}

/** Field names of the items of a rule's list (aux_limit.limits), or null when it is not a list of objects. */
export function listItemKeys(kind: string, key: string): string[] | null {
	const list = ruleSchema(kind)?.properties?.[key];
	const item = list?.type === 'array' && list.items ? list.items : undefined;
	return item?.properties ? Object.keys(item.properties) : null;
}

export const humanize = (key: string) =>
	key
		.replace(/_/g, ' ')
		.replace(/([a-z])([A-Z])/g, '$1 $2')
		.toLowerCase()
		.replace(/^./, (c) => c.toUpperCase());

/** The bounds a number field states, in words ("0 to 1", "above 0"), or ''. */
function boundsText(s: JsonSchema): string {
	const lo = s.minimum ?? s.exclusiveMinimum;
	const hi = s.maximum ?? s.exclusiveMaximum;
	const wide = (x: number | undefined) => x === undefined || Math.abs(x) >= Number.MAX_SAFE_INTEGER;
	if (!wide(lo) && !wide(hi)) return `${lo} to ${hi}`;
	if (!wide(lo)) return s.exclusiveMinimum !== undefined ? `above ${lo}` : `at least ${lo}`;
	if (!wide(hi)) return s.exclusiveMaximum !== undefined ? `below ${hi}` : `at most ${hi}`;
	return '';
}

/**
 * A plain input for a field this page has no description of: its kind from the schema's type (the
 * value in force when the schema does not say), its bounds as the unit line.
 */
export function genericField(key: string, sample: unknown, s: JsonSchema | undefined = undefined): FieldSpec {
	const label = humanize(key);
	const hint = s?.description ?? '';
	const type = Array.isArray(s?.type) ? undefined : s?.type;
	if (type === 'boolean' || (!type && typeof sample === 'boolean')) return { key, type: 'boolean', label, hint };
	if (type === 'number' || type === 'integer' || (!type && typeof sample === 'number')) {
		const unit = s ? boundsText(s) : '';
		return { key, type: 'number', label, hint, integer: type === 'integer', ...(unit ? { unit } : {}) };
	}
	if (type === 'string' || (!type && typeof sample === 'string')) return { key, type: 'text', label, hint };
	return { key, type: 'json', label, hint: hint || 'As JSON.' };
}

/** The JSON Schema of one field of a rule, or of an item field of its list. */
export function fieldSchema(kind: string, key: string, itemKey?: string): JsonSchema | undefined {
	const field = ruleSchema(kind)?.properties?.[key];
	if (itemKey === undefined) return field;
	return field?.items ? field.items.properties?.[itemKey] : undefined;
}
