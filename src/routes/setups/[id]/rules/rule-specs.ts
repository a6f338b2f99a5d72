// What each detector rule's fields mean to a person: label, unit and a one-line explanation, in form order.
// Fields the schema gains later without an entry here still appear (see resolve-specs.ts), only plainer.

import { DEFAULT_RATE_MODEL_UNCERTAINTY } from '$lib/physics/rate-model-schema';

export type Option = { value: string; label: string };

/** The uncertainty assumed for a rate model that states none, in words for the rules page. */
export const DEFAULT_UNCERTAINTY_TEXT = `σ(ln W0) = ${DEFAULT_RATE_MODEL_UNCERTAINTY.W0_sigma} and σ(A) = ${DEFAULT_RATE_MODEL_UNCERTAINTY.A_sigma_fraction * 100} % of A`;

export type FieldSpec =
	| { key: string; type: 'number'; label: string; unit?: string; hint: string; integer?: boolean; optional?: boolean; budget?: boolean }
	| { key: string; type: 'boolean'; label: string; hint: string }
	| { key: string; type: 'choice'; label: string; hint: string; options: (Option & { json: unknown })[] }
	| { key: string; type: 'multi'; label: string; hint: string; options: Option[] }
	| { key: string; type: 'pairs'; label: string; hint: string }
	| { key: string; type: 'text'; label: string; hint: string; placeholder?: string }
	| { key: string; type: 'json'; label: string; hint: string };

export type ListSpec = { key: string; label: string; itemLabel: string; fields: FieldSpec[]; blank: () => Record<string, unknown> };

export type KindSpec = {
	kind: string;
	title: string;
	/** The severity its incidents carry, in words ("critical"; "per limit"). */
	severity: string;
	/** One paragraph: what the rule watches and where its threshold comes from. */
	explanation: string;
	fields: FieldSpec[];
	list?: ListSpec;
};

const budget = (hint: string): FieldSpec => ({
	key: 'falseAlarmEvery_days',
	type: 'number',
	label: 'False-alarm budget: at most one per',
	unit: 'days of frames',
	hint,
	budget: true
});

const clearP: FieldSpec = {
	key: 'clearPValue',
	type: 'number',
	label: 'Quiet when every p-value is at least',
	unit: 'probability, 0–1',
	hint: 'Hysteresis: a far weaker level than the opening one, so the incident does not flap.'
};

const clearWindows = (what: string): FieldSpec => ({
	key: 'clearWindows',
	type: 'number',
	label: 'Clears after',
	unit: 'windows',
	integer: true,
	hint: `Consecutive ${what} windows that clear the incident.`
});

export const KIND_SPECS: KindSpec[] = [
	{
		kind: 'lock_lost',
		title: 'Lock lost',
		severity: 'critical',
		explanation:
			'The oscillator has lost its phase lock (pump or reference unlock, a bias jump, the junction going resistive): lock quality |⟨exp(iKφ)⟩| stays low for several windows in a row.',
		fields: [
			{
				key: 'threshold',
				type: 'number',
				label: 'Low below',
				unit: 'lock quality, 0–1',
				hint: 'A window whose lock quality is below this counts as low.'
			},
			{
				key: 'windows',
				type: 'number',
				label: 'Opens after',
				unit: 'windows',
				integer: true,
				hint: 'Consecutive low windows that open the incident.'
			},
			{
				key: 'clearThreshold',
				type: 'number',
				label: 'Good at or above',
				unit: 'lock quality, 0–1',
				hint: 'Hysteresis: at least the low threshold, so that a lock hovering near it does not flap.'
			},
			clearWindows('good')
		]
	},
	{
		kind: 'agent_silent',
		title: 'Agent silent',
		severity: 'warning',
		explanation:
			'The acquisition has stalled: no frame for a while although the run is open. The only rule on the server’s clock; all others work on the frames’ own time.',
		fields: [
			{
				key: 'after_s',
				type: 'number',
				label: 'Opens after',
				unit: 's without a frame',
				hint: 'Seconds of server clock without a frame while the run is open.'
			}
		]
	},
	{
		kind: 'switching_burst',
		title: 'Switching burst',
		severity: 'critical',
		explanation: `More switches in one window, or over a sliding horizon of windows, than the rate model allows (exact Poisson upper tail). No model is exact, so the tests compare with the upper edge of the model's 2σ band (from its W0_sigma, A_sigma and covariance at the window's temperature; a model that states none is taken to have ${DEFAULT_UNCERTAINTY_TEXT}): the budget holds for any true rate inside the band. The opening level comes from the false-alarm budget, shared by all tests and processes of the rule; without a rate model the rule stays idle.`,
		fields: [
			budget('Each window spends window length ÷ budget of it, so the budget holds whatever the frame rate.'),
			{
				key: 'horizonWindows',
				type: 'number',
				label: 'Sliding horizon',
				unit: 'windows',
				integer: true,
				hint: 'Windows summed for a second test beside the single window; 0 or 1 tests the single window only.'
			},
			{
				key: 'locked',
				type: 'boolean',
				label: 'Run meant to stay locked',
				hint: 'Escapes from vacuum beyond the escape model’s prediction (over vacuum time) count as a burst too.'
			},
			clearP,
			clearWindows('quiet')
		]
	},
	{
		kind: 'rate_drift',
		title: 'Rate drift',
		severity: 'warning (info when the operating point does not match its model)',
		explanation: `A lasting change of the rate, long before any single window shows it: a two-sided Poisson CUSUM on observed ÷ predicted counts, whose decision interval follows from the budget. No model is exact: over the run's first hours (the baseline) each side compares with the edge of the model's 2σ band (from its W0_sigma, A_sigma and covariance; a model that states none is taken to have ${DEFAULT_UNCERTAINTY_TEXT}), and a rate beyond the band is reported once, as info ("this operating point does not match its rate model"), not paged. After that the chart compares with the run's own baseline rate within its uncertainty, so what pages is a change. The budget holds for any true rate inside the band, and is one budget for the rule: the watched rates share it.`,
		fields: [
			budget(
				'The rule’s average time between false alarms while the true rate lies within the model’s 2σ band; the watched rates share it (each chart runs at this × the number of rates watched).'
			),
			{
				key: 'ratioUp',
				type: 'number',
				label: 'Tuned to a rise by',
				unit: '× predicted, > 1',
				hint: 'The rate ratio the upper chart detects fastest.'
			},
			{
				key: 'ratioDown',
				type: 'number',
				label: 'Tuned to a fall to',
				unit: '× predicted, 0–1',
				hint: 'The rate ratio the lower chart detects fastest.'
			},
			{
				key: 'minExpectedPerStep',
				type: 'number',
				label: 'Pool windows until',
				unit: 'predicted counts per step',
				hint: 'Slow rates: windows are pooled into one chart step until their prediction reaches this.'
			},
			{
				key: 'horizonWindows',
				type: 'number',
				label: 'Reporting horizon',
				unit: 'windows',
				integer: true,
				hint: 'Recent windows over which the incident reports the observed ÷ predicted ratio, and clears.'
			},
			{
				key: 'baseline_h',
				type: 'number',
				label: 'Learn the run’s baseline over its first',
				unit: 'hours',
				hint: 'Until then drift beyond the model’s band is an info finding; after, the chart judges change against this baseline. 0: never learn, page against the model’s band all run.'
			},
			{
				key: 'confidence',
				type: 'number',
				label: 'Interval confidence',
				unit: 'two-sided, 0–1',
				hint: 'Confidence of the exact ratio intervals in the evidence.'
			},
			{
				key: 'prediction',
				type: 'choice',
				label: 'Compare with the prediction at',
				hint: 'At each window’s temperature a warmer fridge alone does not open it (aux limits watch the fridge); at nominal it does. Either way the evidence fits the rate on the measured temperature term 1/(2n̄+1) and says whether the temperature explains the excess, does not, or cannot tell (it barely moved).',
				options: [
					{ value: 'temperature', label: 'each window’s fridge temperature', json: 'temperature' },
					{ value: 'nominal', label: 'the nominal temperature', json: 'nominal' }
				]
			},
			{
				key: 'processes',
				type: 'multi',
				label: 'Rates watched',
				hint: 'Each watched rate has its own chart and its own incident; they share the rule’s budget.',
				options: [
					{ value: 'switching', label: 'switching between phase states' },
					{ value: 'escape', label: 'escape from vacuum' }
				]
			}
		]
	},
	{
		kind: 'occupancy_imbalance',
		title: 'Occupancy imbalance',
		severity: 'warning',
		explanation:
			'Where the phase states are symmetric they should fill equally: a test over a horizon flags a state that fills too much or too little. Its sample size follows the switching the frames report (transitions), so states that switch mostly within saddle-sharing pairs, as on junction-type devices with 2M states, are expected and judged on the few switches between pairs; frames without transitions are judged by batch means of the horizon (slower to see an excess). When frames carry transitions, switching concentrated on pairs the setup does not expect is flagged too.',
		fields: [
			budget('Shared between the two tests; the level per window follows from the window length.'),
			{
				key: 'symmetric',
				type: 'choice',
				label: 'Phase states symmetric here',
				hint: '“Decide from the run” means yes when the run’s operating point has zero or unknown detuning.',
				options: [
					{ value: 'auto', label: 'decide from the run', json: 'auto' },
					{ value: 'true', label: 'yes', json: true },
					{ value: 'false', label: 'no (occupancy test off)', json: false }
				]
			},
			{
				key: 'horizonWindows',
				type: 'number',
				label: 'Horizon',
				unit: 'windows',
				integer: true,
				hint: 'Windows summed for both tests. Half an hour of 1-s windows sees a 1.7× excess of one state within the hour at 0.85 switches/s; a shorter horizon sees less.'
			},
			{
				key: 'expectedPairs',
				type: 'pairs',
				label: 'Expected switching pairs',
				hint: 'Neighbours: state i ↔ i ± 1 (mod K), which covers a pair of states sharing a saddle and the neighbouring pair. Switching elsewhere counts as unexpected; how fast occupancy relaxes is measured from the frames, not assumed from this graph.'
			},
			{
				key: 'minSwitches',
				type: 'number',
				label: 'Test occupancy after',
				unit: 'switches and escapes',
				integer: true,
				hint: 'Events the horizon needs before its occupancy is tested.'
			},
			{
				key: 'maxUnexpectedFraction',
				type: 'number',
				label: 'Tolerated on unexpected pairs',
				unit: 'fraction of switches, 0 to < 1',
				hint: 'The pair test flags a larger fraction than this.'
			},
			{
				key: 'minPairSwitches',
				type: 'number',
				label: 'Test pairs after',
				unit: 'switches with a known pair',
				integer: true,
				hint: 'Switches from transitions the horizon needs before the pair test runs.'
			},
			clearP,
			clearWindows('quiet')
		]
	},
	{
		kind: 'aux_limit',
		title: 'Aux limits',
		severity: 'per limit',
		explanation:
			'Named aux values from the frames (mixing-chamber temperature, pump power, bias…) outside limits for several windows; each clears with hysteresis. One incident per name. A frame without the value neither extends nor breaks a streak.',
		fields: [],
		list: {
			key: 'limits',
			label: 'Limits',
			itemLabel: 'limit',
			blank: () => ({ name: '', windows: 3, clearWindows: 3, severity: 'warning' }),
			fields: [
				{ key: 'name', type: 'text', label: 'Aux name', hint: 'As the agent sends it, e.g. mxc_mK.', placeholder: 'mxc_mK' },
				{ key: 'above', type: 'number', label: 'Out above', optional: true, hint: 'Out of limits above this.' },
				{ key: 'clearBelow', type: 'number', label: 'Back at or below', optional: true, hint: 'Default: the upper limit.' },
				{ key: 'below', type: 'number', label: 'Out below', optional: true, hint: 'Out of limits below this.' },
				{ key: 'clearAbove', type: 'number', label: 'Back at or above', optional: true, hint: 'Default: the lower limit.' },
				{
					key: 'windows',
					type: 'number',
					label: 'Opens after',
					unit: 'windows',
					integer: true,
					hint: 'Consecutive windows out of limits.'
				},
				{
					key: 'clearWindows',
					type: 'number',
					label: 'Clears after',
					unit: 'windows',
					integer: true,
					hint: 'Consecutive windows back inside.'
				},
				{
					key: 'severity',
					type: 'choice',
					label: 'Severity',
					hint: 'Critical alerts like a lost lock.',
					options: [
						{ value: 'warning', label: 'warning', json: 'warning' },
						{ value: 'critical', label: 'critical', json: 'critical' }
					]
				}
			]
		}
	}
];

/** The unit an aux name carries by convention (`mxc_mK` → mK), for the limits' inputs. */
export function auxUnit(name: string): string | null {
	const m = /_(mK|K|dBm|dB|uV|mV|V|uA|nA|mA|MHz|GHz|kHz|Hz|mbar|s|ms)$/.exec(name);
	if (!m) return null;
	return m[1] === 'uV' ? 'µV' : m[1] === 'uA' ? 'µA' : m[1];
}
