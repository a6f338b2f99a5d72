// Frame → incident latency under load: RUNS agents each sending RATE_PER_RUN frames/s, where the
// lock quality drops below the lock_lost threshold for exactly the rule's window count once per
// CYCLE frames. Timed from sending the frame that completes the low streak to the incident's
// arrival on the server-sent events stream /api/events. The baseline is the raw ceiling's ack
// latency at the same load (bare ws + JSON.parse + INSERT into PGlite), in alternating phases.
// Run: npm run build && npx tsx tests/bench/incident-latency.bench.ts. Nothing here is asserted.
import { performance } from 'node:perf_hooks';
import { parseDetectorRules } from '../../src/lib/detect/rules';
import { BenchAgent } from './support/agent';
import { RAW_BASELINE, startRawServer } from './support/children';
import { sizeFromEnv, sleep } from './support/env';
import { benchFrame, GOOD_LOCK, LOW_LOCK, type BenchFrame } from './support/frames';
import { copySeed, seedTemplate } from './support/seed';
import { signIn, startAppServer } from './support/server';
import { openEventStream } from './support/sse';
import { percentile } from './support/stats';
import { printTable } from './support/table';

const RUNS = sizeFromEnv('BENCH_INCIDENT_RUNS', 10);
const RATE_PER_RUN = sizeFromEnv('BENCH_INCIDENT_RATE', 100);
/** Frames per message; 1 is the live case (a message every 10 ms per run at 100 frames/s). */
const FRAMES_PER_MESSAGE = sizeFromEnv('BENCH_INCIDENT_FRAMES_PER_MESSAGE', 1);
/** Seconds of each phase; phases alternate app, raw, app, raw. */
const PHASE_S = sizeFromEnv('BENCH_INCIDENT_PHASE_S', 15);
const PHASES = 4;
/** One lock drop per CYCLE frames of a run: at 100 frames/s, one incident per run per second. */
const CYCLE = 100;
const LOW_START = 40;
const TICK_MS = 10;

const { lock_lost: rule } = parseDetectorRules({});
/** Position in the cycle of the frame that completes the low streak: the one that opens the incident. */
const TRIGGER = LOW_START + rule.windows - 1;
const lockAt = (seq: number) => {
	const p = (seq - 1) % CYCLE;
	return p >= LOW_START && p <= TRIGGER ? LOW_LOCK : GOOD_LOCK;
};
if (LOW_LOCK >= rule.threshold || GOOD_LOCK < rule.clearThreshold)
	throw new Error('the bench frames no longer straddle the lock_lost thresholds');

interface Phase {
	target: 'app' | 'raw';
	ack_ms: number[];
	triggerAck_ms: number[];
	/** Send time of each triggering frame, by run id and seq. */
	triggers: Map<string, number>;
}

/** Drives RUNS agents at RATE_PER_RUN frames/s for PHASE_S seconds, on a schedule (not waiting for acks). */
async function drive(agents: BenchAgent[], phase: Phase) {
	const sent = agents.map(() => 0);
	const pending: Promise<void>[] = [];
	const start = performance.now();
	while (performance.now() - start < PHASE_S * 1000) {
		const due = Math.floor(((performance.now() - start) / 1000) * RATE_PER_RUN);
		agents.forEach((agent, i) => {
			while (due - sent[i] >= FRAMES_PER_MESSAGE) {
				const frames: BenchFrame[] = [];
				for (let k = 0; k < FRAMES_PER_MESSAGE; k++) {
					const seq = ++sent[i];
					frames.push(benchFrame(seq, Date.now(), lockAt(seq)));
				}
				const at = performance.now();
				agent.send(frames);
				const last = frames[frames.length - 1].seq;
				const trigger = frames.find((f) => (f.seq - 1) % CYCLE === TRIGGER);
				if (trigger) phase.triggers.set(`${agent.runId}:${trigger.seq}`, at);
				pending.push(
					agent.ackOf(last).then((ackAt) => {
						phase.ack_ms.push(ackAt - at);
						if (trigger) phase.triggerAck_ms.push(ackAt - at);
					})
				);
			}
		});
		await sleep(TICK_MS);
	}
	await Promise.all(pending);
}

async function main() {
	console.log(
		`incident latency: ${RUNS} runs × ${RATE_PER_RUN} frames/s, ${FRAMES_PER_MESSAGE} frame(s)/message; lock_lost opens after ${rule.windows} windows below ${rule.threshold}, once per ${CYCLE} frames per run; ${PHASES} phases of ${PHASE_S} s (app, raw, …)`
	);
	const template = await seedTemplate();
	const appSeed = copySeed(template, 'incident-app');
	const rawSeed = copySeed(template, 'incident-raw');
	const app = await startAppServer(appSeed.dataDir);
	const raw = await startRawServer(rawSeed.dataDir, rawSeed.setupId);
	try {
		const observer = await signIn(app);
		const incidentLatency: number[] = [];
		const seen = new Set<string>();
		let current: Phase | null = null;
		const stream = openEventStream(`${app.url}/api/events`, observer.cookie, (event, data, at) => {
			if (event !== 'incident' || !current) return;
			const inc = (data as { incident: { id: string; kind: string; state: string; runId: string; openedSeq: number | null } }).incident;
			if (inc.kind !== 'lock_lost' || inc.state !== 'open' || seen.has(inc.id)) return;
			seen.add(inc.id);
			const sentAt = current.triggers.get(`${inc.runId}:${inc.openedSeq}`);
			if (sentAt !== undefined) incidentLatency.push(at - sentAt);
		});
		await stream.ready;

		const phases: Phase[] = [];
		for (let p = 0; p < PHASES; p++) {
			const target = p % 2 === 0 ? 'app' : 'raw';
			const server = target === 'app' ? { url: app.wsUrl, token: appSeed.token } : { url: raw.wsUrl, token: rawSeed.token };
			const agents = await Promise.all(
				Array.from({ length: RUNS }, (_, i) => BenchAgent.open(server.url, server.token, `incident-${p}-${i}`))
			);
			const phase: Phase = { target, ack_ms: [], triggerAck_ms: [], triggers: new Map() };
			current = phase;
			const before = incidentLatency.length;
			await drive(agents, phase);
			await sleep(1_000); // incidents still on their way
			await Promise.all(agents.map((a) => a.close()));
			phases.push(phase);
			const got = target === 'app' ? ` ${incidentLatency.length - before}/${phase.triggers.size} incidents` : '';
			console.log(`phase ${p + 1} (${target}): ${phase.ack_ms.length} acks,${got}`);
		}
		stream.close();

		const of = (t: 'app' | 'raw', k: 'ack_ms' | 'triggerAck_ms') => phases.filter((p) => p.target === t).flatMap((p) => p[k]);
		const triggers = phases.filter((p) => p.target === 'app').reduce((n, p) => n + p.triggers.size, 0);
		const rawAck = of('raw', 'triggerAck_ms');
		printTable(
			`Frame → incident at ${RUNS * RATE_PER_RUN} frames/s over ${RUNS} runs`,
			[
				{
					measure: 'frame → incident on /api/events, p50',
					app: percentile(incidentLatency, 0.5),
					baseline: percentile(rawAck, 0.5),
					unit: 'ms',
					target: { on: 'none' }
				},
				{
					measure: 'frame → incident on /api/events, p99',
					app: percentile(incidentLatency, 0.99),
					baseline: percentile(rawAck, 0.99),
					unit: 'ms',
					target: { on: 'app', atMost: 200, unit: 'ms' }
				},
				{
					measure: 'ack latency of every message, p50',
					app: percentile(of('app', 'ack_ms'), 0.5),
					baseline: percentile(of('raw', 'ack_ms'), 0.5),
					unit: 'ms',
					target: { on: 'none' }
				},
				{
					measure: 'ack latency of every message, p99',
					app: percentile(of('app', 'ack_ms'), 0.99),
					baseline: percentile(of('raw', 'ack_ms'), 0.99),
					unit: 'ms',
					target: { on: 'none' }
				}
			],
			[
				`incidents received: ${incidentLatency.length} of ${triggers} lock drops sent to the app`,
				`baseline: the raw ceiling’s ack latency for the same triggering frames at the same load (${RAW_BASELINE}); it commits every message on its own, so at ${(RUNS * RATE_PER_RUN) / FRAMES_PER_MESSAGE} messages/s it falls behind once a commit takes over ${(1000 / ((RUNS * RATE_PER_RUN) / FRAMES_PER_MESSAGE)).toFixed(1)} ms`,
				`BENCH_INCIDENT_FRAMES_PER_MESSAGE=10 sends the same frames/s in messages of 10 every 100 ms per run`
			]
		);
	} finally {
		await app.stop();
		await raw.stop();
	}
}

main().catch((e) => {
	console.error(e);
	process.exit(1);
});
