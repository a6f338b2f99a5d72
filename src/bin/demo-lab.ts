// The invented lab the demo runs: people, setups and who looks after what. Demo data only.
export const DEMO_PASSWORD = 'cryostat-night-shift';

export const demoPeople = [
	{ email: 'ines.varga@aldermoor.example', name: 'Ines Varga', role: 'admin' },
	{ email: 'tomas.okafor@aldermoor.example', name: 'Tomás Okafor', role: 'operator' },
	{ email: 'mei.lindqvist@aldermoor.example', name: 'Mei Lindqvist', role: 'operator' },
	{ email: 'priya.halvorsen@aldermoor.example', name: 'Priya Halvorsen', role: 'observer' }
] as const;

export const demoSetups = [
	{
		name: 'Fridge Bramble · tripler T6',
		description: 'Voltage-biased junction feeding a 5.0 GHz resonator, pumped for period tripling (six phase states).',
		order: 3,
		states: 6,
		mode_GHz: 5.0,
		nominal_mK: 12,
		members: ['tomas.okafor@aldermoor.example', 'mei.lindqvist@aldermoor.example', 'priya.halvorsen@aldermoor.example']
	},
	{
		name: 'Fridge Corrie · doubler D2',
		description: 'Kerr-stabilised period-doubling line at 6.8 GHz, idle this week.',
		order: 2,
		states: 2,
		mode_GHz: 6.8,
		nominal_mK: 15,
		members: ['mei.lindqvist@aldermoor.example']
	}
] as const;

/** The rota of the first setup, in order: the first is on call now, the second backs them up. */
export const demoOnCall = [
	{ email: 'tomas.okafor@aldermoor.example', name: 'Tomás Okafor', phone: '+447700900431' },
	{ email: 'mei.lindqvist@aldermoor.example', name: 'Mei Lindqvist', phone: '+447700900817' }
] as const;
