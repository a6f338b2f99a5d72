// Checks of the rules form's conversions against the shared schema (src/lib/detect/rules.ts), the
// reference both the browser and the API validate with.
import { describe, expect, it } from 'vitest';
import { superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { checkRulesAgainstRun, defaultRules, detectorRulesSchema, parseDetectorRules, RulesRefused } from '$lib/detect/rules';
import {
	draftFromForm,
	errorPaths,
	fromDraft,
	placeIssues,
	resolveSpecs,
	rowDraft,
	toDraft,
	toRulesPath,
	validateDraft
} from './rules-form';

const rules = () => defaultRules() as unknown as Record<string, unknown>;

describe('rules form', () => {
	it('shows every field the schema has and gives back exactly the default rule set', () => {
		const specs = resolveSpecs(rules());
		// Every rule field but the server-set version has an input (schema keys read independently here).
		for (const [kind, rule] of Object.entries(defaultRules())) {
			const spec = specs.find((s) => s.kind === kind)!;
			const shown = new Set(['enabled', 'version', ...spec.fields.map((f) => f.key), ...(spec.list ? [spec.list.key] : [])]);
			for (const key of Object.keys(rule)) expect(shown.has(key), `${kind}.${key} has an input`).toBe(true);
		}
		const v = validateDraft(toDraft(rules(), specs), specs);
		expect(v.issues).toEqual({});
		expect(v.rules).toEqual(defaultRules());
	});

	it('names the field a bad value belongs to, with the schema’s own message', () => {
		const specs = resolveSpecs(rules());
		const draft = toDraft(rules(), specs);
		// Lock quality is |⟨e^{iKφ}⟩|, between 0 and 1 by definition (wire protocol, DESIGN.md).
		draft.lock_lost.fields.threshold = '1.5';
		draft.lock_lost.fields.clearThreshold = '1.5';
		const expected = detectorRulesSchema.safeParse({ lock_lost: { threshold: 1.5, clearThreshold: 1.5 } });
		expect(expected.success).toBe(false);
		const v = validateDraft(draft, specs);
		expect(v.ok).toBe(false);
		expect(v.issues['lock_lost.threshold']).toBe(expected.error!.issues.find((i) => i.path.join('.') === 'lock_lost.threshold')!.message);
		draft.lock_lost.fields.threshold = 'half';
		expect(validateDraft(draft, specs).issues['lock_lost.threshold']).toMatch(/not a number/);
	});

	it('refuses a switching pair with a state the setup does not have, as the server does', () => {
		const specs = resolveSpecs(rules());
		const draft = toDraft(rules(), specs);
		draft.occupancy_imbalance.fields.expectedPairs = '0–1, 5–6';
		// A six-state run (K = 2M for period tripling) has states 0…5, so state 6 does not exist.
		expect(validateDraft(draft, specs).issues).toEqual({});
		expect(validateDraft(draft, specs, 6).issues['occupancy_imbalance.expectedPairs']).toMatch(/state 6 does not exist/);
		expect(validateDraft(draft, specs, 7).issues).toEqual({});
	});

	it('drops an empty aux row and maps a later row’s problem back to its own inputs', () => {
		const specs = resolveSpecs(rules());
		const list = specs.find((s) => s.kind === 'aux_limit')!.list!;
		const draft = toDraft(rules(), specs);
		const bad = rowDraft(list, { name: 'pump_dBm', below: 5, clearAbove: 3 });
		draft.aux_limit.rows = [rowDraft(list), ...(draft.aux_limit.rows ?? []), bad];
		const v = validateDraft(draft, specs);
		expect(fromDraft(draft, specs).rules.aux_limit).toMatchObject({ limits: [{ name: 'mxc_mK' }, { name: 'pump_dBm' }] });
		// clearAbove must be at least below (hysteresis), so the message belongs to row 2's clearAbove.
		expect(Object.keys(v.issues)).toEqual(['aux_limit.limits.2.clearAbove']);
	});

	it('reads back what the form’s inputs submit', () => {
		const specs = resolveSpecs(rules());
		const base = toDraft(rules(), specs);
		const form = new FormData();
		form.append('lock_lost.enabled', 'false');
		form.append('lock_lost.threshold', '0.4');
		form.append('rate_drift.processes', '');
		form.append('rate_drift.processes', 'switching');
		form.append('rate_drift.processes', 'escape');
		form.append('occupancy_imbalance.expectedPairs.mode', 'list');
		form.append('occupancy_imbalance.expectedPairs', '0–1, 1–2');
		form.append('aux_limit.limits.count', '1');
		form.append('aux_limit.limits.0.name', 'mxc_mK');
		form.append('aux_limit.limits.0.above', '40');
		const out = validateDraft(draftFromForm(form, specs, base), specs);
		expect(out.issues).toEqual({});
		expect(out.rules).toMatchObject({
			lock_lost: { enabled: false, threshold: 0.4, windows: 5 },
			rate_drift: { processes: ['switching', 'escape'] },
			occupancy_imbalance: {
				expectedPairs: [
					[0, 1],
					[1, 2]
				]
			},
			aux_limit: { limits: [{ name: 'mxc_mK', above: 40, windows: 3 }] }
		});
	});

	it('places a refused rule set’s field (RulesRefused, data rather than text) on its input', () => {
		const specs = resolveSpecs(rules());
		const draft = toDraft(rules(), specs);
		const list = specs.find((s) => s.kind === 'aux_limit')!.list!;
		draft.aux_limit.rows = [rowDraft(list), rowDraft(list)];
		let refused: unknown;
		try {
			parseDetectorRules({
				aux_limit: {
					limits: [
						{ name: 'a', above: 1 },
						{ name: 'b', above: 1, clearBelow: 2 }
					]
				}
			});
		} catch (err) {
			refused = err;
		}
		expect(refused).toBeInstanceOf(RulesRefused);
		const { path, problem } = refused as RulesRefused;
		expect(path).toEqual(['aux_limit', 'limits', '1', 'clearBelow']);
		expect(Object.keys(placeIssues([{ path, message: problem }], draft, specs))).toEqual(['aux_limit.limits.1.clearBelow']);
		// Rules that parse yet do not fit the run (a pair naming a state a 4-state run lacks) carry a path too.
		const misfit = checkRulesAgainstRun(detectorRulesSchema.parse({ occupancy_imbalance: { expectedPairs: [[0, 5]] } }), 4);
		expect(misfit?.path).toBe('occupancy_imbalance.expectedPairs.0.1');
	});
});

describe('rules form with superforms', () => {
	it('places superValidate’s errors (data, not text) on the inputs they belong to', async () => {
		const specs = resolveSpecs(rules());
		const list = specs.find((s) => s.kind === 'aux_limit')!.list!;
		const draft = toDraft(rules(), specs);
		// A blank first row is dropped before validation, so the rule set's limit 1 is the draft's row 2.
		draft.aux_limit.rows = [rowDraft(list), ...(draft.aux_limit.rows ?? []), rowDraft(list, { name: 'pump_dBm', above: 1, clearBelow: 2 })];
		draft.lock_lost.fields.threshold = '1.5';
		draft.lock_lost.fields.clearThreshold = '1.5';
		const form = await superValidate(fromDraft(draft, specs).rules as never, zod4(detectorRulesSchema));
		expect(form.valid).toBe(false);
		const placed = placeIssues(errorPaths(form.errors), draft, specs);
		expect(placed).toEqual(validateDraft(draft, specs).issues);
		expect(Object.keys(placed).sort()).toEqual(['aux_limit.limits.2.clearBelow', 'lock_lost.clearThreshold', 'lock_lost.threshold']);
		// And back: the draft's row 2 is the rule set's limit 1, where the server sets a field's error.
		expect(toRulesPath('aux_limit.limits.2.clearBelow', draft, specs)).toBe('aux_limit.limits.1.clearBelow');
	});
});
