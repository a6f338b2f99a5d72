// The demo deletes only a folder it made itself (marked with DEMO_MARKER): a production data folder
// must come out of `npm run demo` byte for byte as it went in.
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, afterEach, describe, expect, test } from 'vitest';
import { DEMO_MARKER, demoFolderAction, prepareDemoFolder } from '../../../src/lib/server/demo/data-folder.ts';

describe('demoFolderAction', () => {
	test.each([
		[{ kind: 'missing' } as const, 'create'],
		[{ kind: 'folder', empty: true, hasMarker: false } as const, 'create'],
		[{ kind: 'folder', empty: false, hasMarker: true } as const, 'clear'],
		[{ kind: 'folder', empty: false, hasMarker: false } as const, 'refuse'],
		[{ kind: 'not-a-folder' } as const, 'refuse']
	])('%o → %s', (state, action) => {
		expect(demoFolderAction(state)).toBe(action);
	});
});

describe('prepareDemoFolder on disk', () => {
	const tmp = mkdtempSync(path.join(os.tmpdir(), 'pw-demo-folder-'));
	afterEach(() => {
		rmSync(tmp, { recursive: true, force: true });
		mkdirSync(tmp, { recursive: true });
	});
	afterAll(() => rmSync(tmp, { recursive: true, force: true }));

	test('creates a missing folder with the marker, and clears it on the next start', () => {
		const dir = path.join(tmp, 'demo');
		expect(prepareDemoFolder(dir)).toBe('create');
		expect(existsSync(path.join(dir, DEMO_MARKER))).toBe(true);
		writeFileSync(path.join(dir, 'pglite-file'), 'old demo data');
		expect(prepareDemoFolder(dir)).toBe('clear');
		expect(existsSync(path.join(dir, 'pglite-file'))).toBe(false);
		expect(existsSync(path.join(dir, DEMO_MARKER))).toBe(true);
	});

	test('refuses a folder with data and no marker, naming it, and leaves it as it was', () => {
		const dir = path.join(tmp, 'production');
		mkdirSync(dir);
		writeFileSync(path.join(dir, 'PG_VERSION'), '17');
		expect(() => prepareDemoFolder(dir)).toThrow(
			new RegExp(`${dir.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')} exists and has no ${DEMO_MARKER}`)
		);
		expect(readFileSync(path.join(dir, 'PG_VERSION'), 'utf8')).toBe('17');
		expect(existsSync(path.join(dir, DEMO_MARKER))).toBe(false);
	});

	test('refuses a path that is a file', () => {
		const file = path.join(tmp, 'a-file');
		writeFileSync(file, 'keep me');
		expect(() => prepareDemoFolder(file)).toThrow(/not a folder/);
		expect(readFileSync(file, 'utf8')).toBe('keep me');
	});
});
