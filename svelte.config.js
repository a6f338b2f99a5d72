import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';
import { withoutDependencyNoise } from './src/tooling/quiet-adapter.js';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	compilerOptions: { runes: true },
	kit: {
		adapter: withoutDependencyNoise(adapter({ out: 'build' })),
		// 'auto' gives SvelteKit's inline start-up script a nonce (rendered pages) or a hash.
		// style-src keeps 'unsafe-inline': Svelte renders style="" attributes (charts, bars, style:
		// directives) that no hash can cover. Fonts may be inlined by Vite as data: URLs.
		csp: {
			mode: 'auto',
			directives: {
				'default-src': ['self'],
				'script-src': ['self'],
				'worker-src': ['self'],
				'style-src': ['self', 'unsafe-inline'],
				'img-src': ['self', 'data:', 'blob:'],
				'font-src': ['self', 'data:'],
				'connect-src': ['self'],
				'frame-ancestors': ['none'],
				'base-uri': ['self'],
				'form-action': ['self'],
				'object-src': ['none']
			}
		},
		// kit.csrf stays at its default (on): it refuses cross-site form posts to actions; the API has
		// its own check (src/lib/server/http/api-write-guard.ts).
		typescript: {
			// The agent lives outside src/ but is type-checked with the rest.
			config: (tsconfig) => {
				tsconfig.include.push('../agent/**/*.ts');
				return tsconfig;
			}
		}
	}
};

export default config;
