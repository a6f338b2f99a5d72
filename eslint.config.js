// ESLint flat config in the shape of SvelteKit's project template: JavaScript, TypeScript and Svelte
// recommended rules, with Prettier last so no rule argues with the formatter.
import js from '@eslint/js';
import prettier from 'eslint-config-prettier';
import svelte from 'eslint-plugin-svelte';
import globals from 'globals';
import ts from 'typescript-eslint';
import svelteConfig from './svelte.config.js';

export default ts.config(
	{ ignores: ['build/', '.svelte-kit/', 'drizzle/', 'test-results/', '.data/', '.test-data/'] },
	js.configs.recommended,
	...ts.configs.recommended,
	...svelte.configs.recommended,
	prettier,
	...svelte.configs.prettier,
	{
		languageOptions: { globals: { ...globals.browser, ...globals.node } },
		rules: {
			// TypeScript already reports undefined names, and knows the global types this rule does not.
			'no-undef': 'off',
			// The app is served at the root (no kit.paths.base), so a plain '/setups/…' is the right link;
			// resolve() around every href would change nothing.
			'svelte/no-navigation-without-resolve': 'off',
			// `{' '}` is how this code keeps a space at the start of an {#if} block, where Svelte trims a
			// bare one and Prettier moves it onto its own line.
			'svelte/no-useless-mustaches': 'off',
			// Leading underscores mark names kept on purpose: `{ iq: _iq, ...rest }` drops a field by destructuring.
			'@typescript-eslint/no-unused-vars': [
				'error',
				{ argsIgnorePattern: '^_', varsIgnorePattern: '^_', caughtErrorsIgnorePattern: '^_', destructuredArrayIgnorePattern: '^_' }
			]
		}
	},
	{
		// Tests reach into detector snapshots and evidence, which the app types as `unknown` on purpose,
		// to check the fields under test: an `as any` there is a probe, not a type the code relies on.
		files: ['tests/**/*.ts'],
		rules: { '@typescript-eslint/no-explicit-any': 'off' }
	},
	{
		files: ['**/*.svelte', '**/*.svelte.ts', '**/*.svelte.js'],
		// No rule here needs type information (svelte-check does the type checking), so the parser runs
		// without a TypeScript project: that keeps `eslint .` to seconds rather than minutes.
		languageOptions: { parserOptions: { extraFileExtensions: ['.svelte'], parser: ts.parser, svelteConfig } }
	}
);
