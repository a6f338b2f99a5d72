import { sveltekit } from '@sveltejs/kit/vite';
import tailwindcss from '@tailwindcss/vite';
import { defineConfig } from 'vitest/config';
import type { Plugin } from 'vite';

// In development the agent's WebSocket is served by Vite's own HTTP server. The handler is loaded
// through Vite's module graph so it shares one database and one event bus with the pages.
function agentStream(): Plugin {
	return {
		name: 'phasewarden-agent-stream',
		configureServer(server) {
			server.httpServer?.on('upgrade', async (req, socket, head) => {
				if (!req.url?.startsWith('/api/agent/stream')) return;
				const mod = await server.ssrLoadModule('/src/lib/server/ingest/upgrade.ts');
				mod.handleAgentUpgrade(req, socket, head);
			});
		}
	};
}

export default defineConfig({
	plugins: [tailwindcss(), sveltekit(), agentStream()],
	server: { watch: { ignored: ['**/.data/**', '**/.test-data/**'] } },
	build: {
		rolldownOptions: {
			// The timing report names SvelteKit's own compile steps, which we cannot speed up; it buries
			// the demo's accounts and URLs under twenty lines of callback times.
			checks: { bundlerTimings: false }
		}
	},
	test: {
		expect: { requireAssertions: true },
		projects: [
			{
				extends: true,
				test: {
					name: 'unit',
					environment: 'node',
					include: ['tests/unit/**/*.test.ts', 'src/**/*.test.ts'],
					// The seeded Monte Carlo checks take seconds on an idle core; a busy CI machine must not fail them on time.
					testTimeout: 30_000
				}
			},
			{
				extends: true,
				test: {
					name: 'integration',
					environment: 'node',
					include: ['tests/integration/**/*.test.ts'],
					globalSetup: ['tests/integration/support/global-setup.ts'],
					testTimeout: 60_000,
					hookTimeout: 60_000,
					fileParallelism: false
				}
			},
			{
				extends: true,
				test: {
					name: 'browser',
					environment: 'node',
					include: ['tests/browser/**/*.test.ts'],
					globalSetup: ['tests/integration/support/global-setup.ts'],
					testTimeout: 120_000,
					hookTimeout: 120_000,
					fileParallelism: false
				}
			}
		]
	}
});
