// Sentences for the kinds that compare one value with a limit: lock quality, an aux value, and
// the time since the agent's last frame.
import type { Description, IncidentFacts } from './describe';
import { where } from './describe';
import { listAt, numAt, objAt, strAt, type Json } from './read';
import { auxName, count, duration, num, utcClock, utcWhen, WINDOWS, withUnit } from './words';

const lockOf = (s: Json | null) => numAt(s, 'lock');

export function describeLockLost(f: IncidentFacts): Description {
	const ev = f.evidence;
	const threshold = numAt(ev, 'threshold');
	const clearThreshold = numAt(ev, 'clearThreshold');
	const values = listAt(ev, 'values');
	const first = values[0];
	const last = values.at(-1);
	const lowest = objAt(ev, 'lowest');
	if (lowest && values.length > 0) {
		// The clearing: the values are the good streak.
		return {
			what: `Phase lock${where(f)} is back at or above ${num(clearThreshold, 2)} for ${count(values.length, WINDOWS)} since ${utcClock(numAt(first, 't_ms') ?? 0)}.`,
			details: [`While it was lost, the lowest lock quality was ${num(lockOf(lowest), 2)} at ${utcClock(numAt(lowest, 't_ms') ?? 0)}.`]
		};
	}
	if (values.length === 0 && lowest) {
		return {
			what: `Phase lock${where(f)} fell further: ${num(lockOf(lowest), 2)} at ${utcClock(numAt(lowest, 't_ms') ?? 0)}.`,
			details: []
		};
	}
	const n = numAt(ev, 'count') ?? values.length;
	const what = `Phase lock${where(f)} fell below ${num(threshold, 2)} for ${count(n, WINDOWS)} in a row${first ? `, since ${utcClock(numAt(first, 't_ms') ?? 0)}` : ''}.`;
	const details: string[] = [];
	if (last)
		details.push(
			`The latest lock quality was ${num(lockOf(last), 2)} at ${utcClock(numAt(last, 't_ms') ?? 0)}, against ${num(threshold, 2)} required; 1 means every shot sits exactly on its phase state.`
		);
	const lowestSeen = values.reduce<number | null>((m, v) => (lockOf(v) !== null && (m === null || lockOf(v)! < m) ? lockOf(v) : m), null);
	if (lowestSeen !== null && values.length > 1)
		details.push(`The lowest of these ${count(values.length, WINDOWS)} was ${num(lowestSeen, 2)}.`);
	const skipped = numAt(ev, 'skippedWindows');
	if (skipped) details.push(`${count(skipped, WINDOWS)} without phase-state shots were passed over.`);
	if (clearThreshold !== null)
		details.push(`It clears once lock stays at or above ${num(clearThreshold, 2)} for ${count(numAt(ev, 'clearWindows') ?? 1, WINDOWS)}.`);
	return { what, details };
}

export function describeAgentSilent(f: IncidentFacts): Description {
	const ev = f.evidence;
	const last_ms = numAt(ev, 'lastFrameAt_ms');
	const silence_s = numAt(ev, 'silence_s');
	const lastSeq = numAt(ev, 'lastSeq');
	const resumed_ms = numAt(ev, 'resumedAt_ms');
	const ended_ms = numAt(ev, 'endedAt_ms');
	const lastWords = last_ms === null ? 'since the run opened' : `since ${utcWhen(last_ms)}`;
	if (resumed_ms !== null) {
		return {
			what: `Frames from the agent${where(f)} arrive again since ${utcClock(resumed_ms)}, after ${duration(silence_s ?? 0)} of silence.`,
			details:
				lastSeq === null
					? []
					: [`The last frame before the silence was number ${lastSeq}; the first after it was number ${num(numAt(ev, 'resumedSeq'))}.`]
		};
	}
	if (ended_ms !== null) {
		return { what: `The run${where(f)} ended at ${utcClock(ended_ms)}, so the agent is no longer expected to send frames.`, details: [] };
	}
	const details = [`The limit is ${duration(numAt(ev, 'after_s') ?? 0)} without a frame.`];
	if (lastSeq !== null) details.push(`The last frame received was number ${lastSeq}.`);
	return { what: `No frame from the agent${where(f)} for ${duration(silence_s ?? 0)}, ${lastWords}.`, details };
}

export function describeAuxLimit(f: IncidentFacts): Description {
	const ev = f.evidence;
	const raw = strAt(ev, 'name') ?? f.key ?? 'value';
	const { name, unit } = auxName(raw);
	const side = strAt(ev, 'side');
	const limit = objAt(ev, 'limit');
	const bound = side === 'below' ? numAt(limit, 'below') : numAt(limit, 'above');
	const values = listAt(ev, 'values');
	const worst = objAt(ev, 'worst');
	const first = values[0];
	const sideWord = side === 'below' ? 'below' : 'above';
	if (worst && values.length > 0) {
		return {
			what: `The ${name}${where(f)} is back inside its limits for ${count(values.length, WINDOWS)} since ${utcClock(numAt(first, 't_ms') ?? 0)}.`,
			details: [`While out of limits it went as far as ${withUnit(numAt(worst, 'value'), unit)} at ${utcClock(numAt(worst, 't_ms') ?? 0)}.`]
		};
	}
	if (worst)
		return {
			what: `The ${name}${where(f)} moved further ${sideWord} its limit: ${withUnit(numAt(worst, 'value'), unit)} at ${utcClock(numAt(worst, 't_ms') ?? 0)}.`,
			details: []
		};
	const n = numAt(ev, 'count') ?? values.length;
	const what = `The ${name}${where(f)} stayed ${sideWord} ${withUnit(bound, unit)} for ${count(n, WINDOWS)} in a row${first ? `, since ${utcClock(numAt(first, 't_ms') ?? 0)}` : ''}.`;
	const far = values.reduce<Json | null>((m, v) => {
		const x = numAt(v, 'value');
		if (x === null) return m;
		return m === null || (side === 'below' ? x < numAt(m, 'value')! : x > numAt(m, 'value')!) ? v : m;
	}, null);
	const details: string[] = [];
	if (far && bound !== null) {
		const off = (numAt(far, 'value') ?? 0) - bound;
		details.push(
			`The furthest was ${withUnit(numAt(far, 'value'), unit)} at ${utcClock(numAt(far, 't_ms') ?? 0)}, ${withUnit(Math.abs(off), unit)} ${sideWord} the limit.`
		);
	}
	const last = values.at(-1);
	if (last && last !== far)
		details.push(`The latest was ${withUnit(numAt(last, 'value'), unit)} at ${utcClock(numAt(last, 't_ms') ?? 0)}.`);
	return { what, details };
}
