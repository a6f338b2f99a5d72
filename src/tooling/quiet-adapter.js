// adapter-node bundles the server with its own rollup call, which takes no `onwarn`: every import
// cycle inside a dependency (Svelte's runtime, kysely, typebox: about 200 lines) is printed before the
// demo's accounts and URLs. This wrapper drops, while the adapter runs, only the warnings known to be
// harmless: cycles whose every module is in node_modules, and better-auth's optional OpenTelemetry
// import left external. Anything else, cycles through our own code included, still prints.

/** @param {unknown} message */
export function isHarmlessAdapterWarning(message) {
	if (typeof message !== 'string') return false;
	const cycle = /^Circular dependency: (.+)$/.exec(message);
	if (cycle) return cycle[1].split(' -> ').every((module) => module.startsWith('node_modules/'));
	return /^"@opentelemetry\/api" is imported by "node_modules\/@better-auth\/.*treating it as an external dependency\.?$/.test(message);
}

/**
 * @param {import('@sveltejs/kit').Adapter} adapter
 * @returns {import('@sveltejs/kit').Adapter}
 */
export function withoutDependencyNoise(adapter) {
	return {
		...adapter,
		async adapt(builder) {
			const warn = console.warn;
			console.warn = (...args) => {
				if (!isHarmlessAdapterWarning(args[0])) warn(...args);
			};
			try {
				await adapter.adapt(builder);
			} finally {
				console.warn = warn;
			}
		}
	};
}
