// Seeds one template data directory per test run (password hashing makes seeding slow), which
// every test then copies into a fresh folder of its own.
import { rmSync } from 'node:fs';
import type { TestProject } from 'vitest/node';
import { createTemplate } from './server';

export default async function setup(project: TestProject) {
	const template = await createTemplate();
	project.provide('phasewardenTemplate', template);
	return () => rmSync(template.dataDir, { recursive: true, force: true });
}

declare module 'vitest' {
	export interface ProvidedContext {
		phasewardenTemplate: { dataDir: string; setupId: string; token: string; databaseUrl?: string };
	}
}
