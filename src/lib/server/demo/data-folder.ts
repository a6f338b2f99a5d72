// The demo starts from a clean folder every time, so it deletes one: only a folder it made itself,
// recognised by a marker file it writes on creation. Any other folder (production data, a folder
// named by mistake) is refused untouched.
import { existsSync, mkdirSync, readdirSync, rmSync, statSync, writeFileSync } from 'node:fs';
import path from 'node:path';

export const DEMO_MARKER = '.phasewarden-demo';
/** The demo's own variable; PHASEWARDEN_DATA (the production folder) is never used by the demo. */
export const DEMO_DATA_ENV = 'PHASEWARDEN_DEMO_DATA';

export type DemoFolderState = { kind: 'missing' } | { kind: 'not-a-folder' } | { kind: 'folder'; empty: boolean; hasMarker: boolean };

export type DemoFolderAction = 'create' | 'clear' | 'refuse';

/** What the demo may do with its folder: make it, empty a demo folder, or leave it alone. */
export function demoFolderAction(state: DemoFolderState): DemoFolderAction {
	if (state.kind === 'missing') return 'create';
	if (state.kind === 'not-a-folder') return 'refuse';
	if (state.hasMarker) return 'clear';
	// An empty folder holds nothing to lose; anything else without the marker is someone's data.
	return state.empty ? 'create' : 'refuse';
}

export function readDemoFolderState(dir: string): DemoFolderState {
	if (!existsSync(dir)) return { kind: 'missing' };
	if (!statSync(dir).isDirectory()) return { kind: 'not-a-folder' };
	const entries = readdirSync(dir);
	return { kind: 'folder', empty: entries.length === 0, hasMarker: entries.includes(DEMO_MARKER) };
}

export function refusalReason(dir: string, state: DemoFolderState): string {
	if (state.kind === 'not-a-folder') return `${dir} exists and is not a folder; the demo left it untouched.`;
	return (
		`${dir} exists and has no ${DEMO_MARKER} marker, so it was not made by the demo and was left untouched ` +
		`(the demo clears its folder on every start). Delete it yourself if it is an old demo folder, ` +
		`or set ${DEMO_DATA_ENV} to another folder.`
	);
}

/** Leaves `dir` as an empty demo folder with its marker, or throws without touching anything. */
export function prepareDemoFolder(dir: string): DemoFolderAction {
	const state = readDemoFolderState(dir);
	const action = demoFolderAction(state);
	if (action === 'refuse') throw new Error(refusalReason(dir, state));
	if (action === 'clear') rmSync(dir, { recursive: true, force: true });
	mkdirSync(dir, { recursive: true });
	writeFileSync(path.join(dir, DEMO_MARKER), 'Made by `npm run demo`, which deletes this folder on every start.\n');
	return action;
}
