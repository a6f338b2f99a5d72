import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	compilerOptions: { runes: true },
	kit: {
		adapter: adapter({ out: 'build' }),
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
