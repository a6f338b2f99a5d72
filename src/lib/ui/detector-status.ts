// How a detector's status looks: a word, a shape and a tone, like every status (status.ts), so
// "not watching" never depends on colour.
import type { DetectorStatus } from '$lib/detect/status';
import type { StatusLook } from './status';

export function detectorLook(s: Pick<DetectorStatus, 'active' | 'code'>): StatusLook {
	if (s.active && s.code === 'watching') return { word: 'Watching', shape: 'dot', tone: 'steady', hint: 'This detector can raise its incident' };
	if (s.active) return { word: 'Limited', shape: 'circle-i', tone: 'accent', hint: 'Watching, but part of what it tests cannot be seen' };
	if (s.code === 'run_ended') return { word: 'Ended', shape: 'square', tone: 'muted', hint: 'The run ended' };
	if (s.code === 'disabled') return { word: 'Off', shape: 'square', tone: 'muted', hint: 'Turned off in the rules' };
	return { word: 'Not watching', shape: 'triangle-outline', tone: 'caution', hint: 'This detector cannot see: its silence says nothing' };
}

/** Detectors that cannot see for a reason other than an operator's choice or the end of the run. */
export function blindDetectors(list: readonly DetectorStatus[]): DetectorStatus[] {
	return list.filter((s) => !s.active && s.code !== 'disabled' && s.code !== 'run_ended');
}
