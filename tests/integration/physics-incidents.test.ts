// A scripted run over the real server with a rate model in place: an injected switching burst, an
// aux excursion of the mixing chamber and a sustained doubling of the switching rate each produce
// their own incident — and nothing else — with evidence, and each is e-mailed to the operators.
import { afterAll, beforeAll, expect, it } from 'vitest';
import { RUN, frame, startAgent } from './support/agent-socket';
import { people, seedDataDir, signIn, startServer, type RunningServer, type Seeded } from './support/server';
import { uniformStream, poissonKnuth } from '../support/random';
import { EXACT_UNIT_RATE_MODEL } from './support/exact-model';

let seeded: Seeded;
let server: RunningServer;
beforeAll(async () => {
	seeded = await seedDataDir();
	server = await startServer(seeded.dataDir);
});
afterAll(async () => {
	await server?.stop();
});

it('raises switching_burst, aux_limit and rate_drift for exactly the injected faults', async () => {
	const operator = await signIn(server, 'operator');
	// W = W0·exp(−A/(2n̄+1)); at 5 GHz and 12 mK n̄ ≈ 2e-9, so W ≈ W0·e^{−A} = 1 switch per second.
	// An exact model (zero stated uncertainty), so the drift is judged against the prediction itself.
	const model = EXACT_UNIT_RATE_MODEL;
	const saved = await operator(`/api/setups/${seeded.setupId}/rate-model`, { method: 'PUT', body: JSON.stringify(model) });
	expect(saved.status).toBe(200);

	// A sustained doubling is also an excess over any sliding horizon, so with the horizon test on
	// the drift would raise a burst as well; this run checks the single-window burst test alone.
	const rules = await (await operator(`/api/setups/${seeded.setupId}/rules`)).json();
	// The drift comes in the run's first minutes: charted against the model, not a learned baseline.
	const onlyWindows = {
		...rules.rules,
		switching_burst: { ...rules.rules.switching_burst, horizonWindows: 0 },
		rate_drift: { ...rules.rules.rate_drift, baseline_h: 0 }
	};
	expect((await operator(`/api/setups/${seeded.setupId}/rules`, { method: 'PUT', body: JSON.stringify(onlyWindows) })).status).toBe(200);

	const u = uniformStream(2026);
	const frames = Array.from({ length: 600 }, (_, i) => {
		const seq = i + 1;
		const rateFactor = seq > 200 ? 2 : 1; // the drift: twice the predicted rate from seq 201 on
		const f = { ...frame(seq), dwell_s: 1, switches: poissonKnuth(1 * rateFactor, u) };
		if (seq >= 100 && seq < 112) f.aux = { mxc_mK: 35 }; // the fridge warms past the 30 mK limit
		// The burst comes while the drift is already open (one open incident per kind), so the
		// CUSUM's response to it cannot be mistaken for the drift. P(K ≥ 25 | μ = 1) ≈ 1e-25.
		if (seq === 450) f.switches = 25;
		return f;
	});
	const agent = await startAgent(server.wsUrl, seeded.token, { ...RUN, key: 'physics-run' });
	for (let i = 0; i < frames.length; i += 100) agent.send({ type: 'frames', frames: frames.slice(i, i + 100) });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === 600, 30_000);

	const observer = await signIn(server, 'observer');
	const { incidents } = await (await observer(`/api/incidents?run=${agent.welcome.run}&sort=openedAt&order=asc`)).json();
	const byKind = Object.fromEntries(incidents.map((i: { kind: string }) => [i.kind, i]));
	expect(incidents.map((i: { kind: string }) => i.kind).sort()).toEqual(['aux_limit', 'rate_drift', 'switching_burst']);

	const burst = byKind.switching_burst;
	expect(burst).toMatchObject({ severity: 'critical', openedSeq: 450 });
	expect(burst.evidence).toMatchObject({ rule: 'switching_burst' });
	expect(JSON.stringify(burst.evidence)).toMatch(/pValue|p_value/);

	const aux = byKind.aux_limit;
	expect(aux).toMatchObject({ key: 'mxc_mK', openedSeq: 102, state: 'resolved' });

	const drift = byKind.rate_drift;
	expect(drift.severity).toBe('warning');
	expect(drift.openedSeq).toBeGreaterThan(200);
	expect(drift.openedSeq).toBeLessThan(450);
	// The fridge sat at the nominal 12 mK, where a 5 GHz mode's 1/(2n̄+1) does not move: the
	// temperature cannot carry the doubling.
	expect(drift.evidence.explainedByTemperature).toBe(false);
	expect(drift.evidence.temperatureFit.reason).toBe('temperature_at_nominal');

	// These three opened minutes apart in agent time, so each heads its own group and is paged; the
	// outbox sends after commit and the group's gathering window (2 s in tests), hence the poll.
	for (const incident of incidents) {
		await expect
			.poll(
				async () => {
					const mail = await (await operator('/api/dev/mail')).json();
					return mail.messages.some(
						(m: { to: string[]; text: string }) => m.to.includes(people.operator.email) && m.text.includes(`/incidents/${incident.id}`)
					);
				},
				{ timeout: 15_000 }
			)
			.toBe(true);
	}
	await agent.close();
});
