// How a detector's status looks: a word, a shape and a tone, like every status (status.ts), so
// "not watching" never depends on colour.
import type { DetectorStatus } from '$lib/detect/status';
import type { StatusLook } from './status';

/** `setup`: whether a rule can run on the setup's runs at all (the rules page); `run`: what a run's detector sees now. */
export function detectorLook(s: Pick<DetectorStatus, 'active' | 'code'>, context: 'run' | 'setup' = 'run'): StatusLook {
	const run = context === 'run';
	if (s.active && s.code === 'watching') {
		return run
			? { word: 'Watching', shape: 'dot', tone: 'steady', hint: 'This detector can raise its incident' }
			: { word: 'Can run', shape: 'dot', tone: 'steady', hint: 'This rule can run on this setup' };
	}
	if (s.active) {
		return run
			? { word: 'Limited', shape: 'circle-i', tone: 'accent', hint: 'Watching, but part of what it tests cannot be seen' }
			: { word: 'Partly', shape: 'circle-i', tone: 'accent', hint: 'This rule runs, but part of what it tests cannot be seen here' };
	}
	if (s.code === 'run_ended') return { word: 'Ended', shape: 'square', tone: 'muted', hint: 'The run ended' };
	if (s.code === 'disabled') return { word: 'Off', shape: 'square', tone: 'muted', hint: 'Turned off in the rules' };
	return run
		? { word: 'Not watching', shape: 'triangle-outline', tone: 'caution', hint: 'This detector cannot see: its silence says nothing' }
		: { word: 'Cannot run', shape: 'triangle-outline', tone: 'caution', hint: 'This rule cannot run on this setup as it stands' };
}

/** Detectors that cannot see for a reason other than an operator's choice or the end of the run. */
export function blindDetectors(list: readonly DetectorStatus[]): DetectorStatus[] {
	return list.filter((s) => !s.active && s.code !== 'disabled' && s.code !== 'run_ended');
}
