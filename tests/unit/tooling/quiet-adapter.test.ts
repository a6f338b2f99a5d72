// The messages below are copied from `npm run build` output (adapter-node 5.5.7's rollup).
import { afterEach, describe, expect, it, vi } from 'vitest';
import { isHarmlessAdapterWarning, withoutDependencyNoise } from '../../../src/tooling/quiet-adapter.js';
import type { Adapter, Builder } from '@sveltejs/kit';

const dependencyCycle =
	'Circular dependency: node_modules/svelte/src/internal/client/runtime.js -> node_modules/svelte/src/internal/client/reactivity/effects.js -> node_modules/svelte/src/internal/client/runtime.js';
const ourCycle = 'Circular dependency: src/lib/server/db/index.ts -> node_modules/drizzle-orm/index.js -> src/lib/server/db/index.ts';
const otel =
	'"@opentelemetry/api" is imported by "node_modules/@better-auth/core/dist/instrumentation/api.mjs", but could not be resolved – treating it as an external dependency.';

describe('isHarmlessAdapterWarning', () => {
	it('drops a cycle that stays inside node_modules and the optional OpenTelemetry import', () => {
		expect(isHarmlessAdapterWarning(dependencyCycle)).toBe(true);
		expect(isHarmlessAdapterWarning(otel)).toBe(true);
	});

	it('keeps a cycle through our own code, other unresolved imports and anything that is not text', () => {
		expect(isHarmlessAdapterWarning(ourCycle)).toBe(false);
		expect(
			isHarmlessAdapterWarning(
				'"left-pad" is imported by "src/lib/x.ts", but could not be resolved – treating it as an external dependency.'
			)
		).toBe(false);
		expect(isHarmlessAdapterWarning(new Error(dependencyCycle))).toBe(false);
	});
});

describe('withoutDependencyNoise', () => {
	afterEach(() => vi.restoreAllMocks());

	it('filters console.warn only while the adapter runs, and restores it even when the adapter throws', async () => {
		const printed: unknown[] = [];
		const original = vi.spyOn(console, 'warn').mockImplementation((m: unknown) => void printed.push(m));
		const before = console.warn;
		const inner: Adapter = {
			name: 'test',
			adapt: async () => {
				console.warn(dependencyCycle);
				console.warn(ourCycle);
				throw new Error('adapter failed');
			}
		};
		await expect(withoutDependencyNoise(inner).adapt({} as Builder)).rejects.toThrow('adapter failed');
		expect(printed).toEqual([ourCycle]);
		expect(console.warn).toBe(before);
		expect(original).toHaveBeenCalledTimes(1);
	});
});
