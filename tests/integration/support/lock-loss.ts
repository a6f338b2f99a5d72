// Drives one run through a lock loss that the detector sees (critical lock_lost incident) and,
// with `recover`, back to lock so the incident resolves itself.
import { RUN, frame, startAgent } from './agent-socket';

export async function lockLossRun(wsUrl: string, token: string, key: string, { recover = false } = {}) {
	const agent = await startAgent(wsUrl, token, { ...RUN, key });
	// 10 locked windows, then lock lost (threshold 0.5 for 5 windows), then locked again if asked.
	const total = recover ? 32 : 22;
	const lockOf = (seq: number) => (seq > 10 && seq <= 22 ? 0.15 : 0.93);
	const frames = Array.from({ length: total }, (_, i) => frame(i + 1, lockOf(i + 1)));
	for (let i = 0; i < frames.length; i += 4) agent.send({ type: 'frames', frames: frames.slice(i, i + 4) });
	await agent.waitFor((m) => m.type === 'ack' && m.seq === total);
	await agent.close();
	return agent.welcome.run as string;
}
