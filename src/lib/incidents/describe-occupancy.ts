// Sentences for occupancy imbalance: phase states filling unequally, or switches between pairs of
// states the setup does not expect.
import type { Description, IncidentFacts } from './describe';
import { where } from './describe';
import { listAt, numAt, numbersAt, objAt, strAt } from './read';
import { chance, count, duration, num, percent, stateName, SWITCHES, utcClock, WINDOWS } from './words';

function spanWords(ev: Record<string, unknown>): string {
	const h = objAt(ev, 'horizon');
	const windows = numAt(h, 'windows') ?? 0;
	const from_ms = numAt(h, 'from_ms');
	const to_ms = numAt(h, 'to_ms');
	if (from_ms === null || to_ms === null) return `over the last ${count(windows, WINDOWS)}`;
	return `over the last ${count(windows, WINDOWS)} (${duration((to_ms - from_ms) / 1000)}, since ${utcClock(from_ms)})`;
}

export function describeOccupancy(f: IncidentFacts): Description {
	const ev = f.evidence;
	const clearing = 'worstPValue' in ev;
	if ((f.key ?? strAt(ev, 'key')) === 'pairs') {
		const unexpected = numAt(ev, 'unexpected') ?? 0;
		const switches = numAt(ev, 'switches') ?? 0;
		const tolerated = numAt(ev, 'maxUnexpectedFraction');
		if (clearing) return { what: `Switching${where(f)} is back on the expected pairs of states.`, details: [] };
		const details = [
			`That is more than the tolerated ${percent(tolerated)}; the chance of so many at the tolerated share is ${chance(numAt(ev, 'pValue'))}.`
		];
		const K = f.states ?? 0;
		const top = listAt(ev, 'topPairs').slice(0, 3);
		if (top.length > 0) {
			const name = (i: number) => (K > 0 ? stateName(i, K) : `state ${i}`);
			details.push(
				`Most went ${top.map((p) => `from ${name(numAt(p, 'from') ?? 0)} to ${name(numAt(p, 'to') ?? 0)} (${count(numAt(p, 'count') ?? 0, SWITCHES)})`).join(', ')}.`
			);
		}
		return {
			what: `${num(unexpected)} of ${count(switches, SWITCHES)}${where(f)} ${spanWords(ev)} went between states the setup does not expect (${percent(switches > 0 ? unexpected / switches : null)}).`,
			details
		};
	}
	const fractions = numbersAt(ev, 'fractions') ?? [];
	const K = f.states ?? (fractions.length || (numbersAt(ev, 'counts')?.length ?? 0));
	const equal = numAt(ev, 'expectedFraction') ?? (K > 0 ? 1 / K : null);
	if (clearing) return { what: `The phase states${where(f)} fill equally again.`, details: [] };
	const over = objAt(ev, 'mostOver');
	const under = objAt(ev, 'mostUnder');
	const name = (s: number | null) => (s === null ? 'a state' : K > 0 ? stateName(s, K) : `state ${s}`);
	const details: string[] = [];
	if (over && under) {
		details.push(
			`${name(numAt(over, 'state'))[0].toUpperCase()}${name(numAt(over, 'state')).slice(1)} holds ${percent(numAt(over, 'fraction'))} of the shots in phase states and ${name(numAt(under, 'state'))} only ${percent(numAt(under, 'fraction'))}, where equal filling gives ${percent(equal)} each.`
		);
	}
	const shots = numAt(ev, 'shots');
	if (shots !== null)
		details.push(
			`The test counted ${num(shots)} shots and ${count(numAt(ev, 'switches') ?? 0, SWITCHES)}; the switches set how many of the shots are independent.`
		);
	details.push(
		`The chance of an imbalance this large if the states filled equally is ${chance(numAt(ev, 'pValue'))}, against a limit of ${chance(numAt(ev, 'alpha'))}.`
	);
	return { what: `The phase states${where(f)} fill unequally ${spanWords(ev)}.`, details };
}
