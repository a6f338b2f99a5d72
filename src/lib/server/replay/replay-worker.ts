// Worker-thread entry of a replay: a fresh detector engine fed the pages the main thread posts,
// folding its events into incidents, so the engine's work never holds up the event loop.
//
// The module is also imported (dynamically) on the main thread, only to learn its own URL: that
// import makes the bundlers (Vite's server build, then adapter-node's) emit it as a chunk of its
// own, and import.meta.url is then that chunk's file in build/server, or this .ts file when run
// from source. Vite does not bundle `new Worker(new URL(..., import.meta.url))` for the server.
import { isMainThread, parentPort, workerData } from 'node:worker_threads';
import { IncidentFold, Replayer } from '../../detect/replay';
import { RulesRefused } from '../../detect/rules';
import { REPLAY_WORKER_ROLE, type FromReplayWorker, type ReplayWorkerData, type ToReplayWorker } from './worker-protocol';

export const replayWorkerUrl: string = import.meta.url;

const data = workerData as Partial<ReplayWorkerData> | null;
if (!isMainThread && parentPort && data?.role === REPLAY_WORKER_ROLE) {
	const port = parentPort;
	const send = (m: FromReplayWorker) => port.postMessage(m);
	const fail = (err: unknown) => {
		const e = err instanceof Error ? err : new Error(String(err));
		const rule = e instanceof RulesRefused ? { path: e.path, problem: e.problem } : undefined;
		send({ type: 'error', name: e.name, message: e.message, rule });
	};
	let replayer: Replayer | null = null;
	try {
		replayer = new Replayer(data.rules, data.run!, data.options ?? {});
	} catch (err) {
		fail(err);
	}
	const fold = new IncidentFold();
	port.on('message', (m: ToReplayWorker) => {
		if (!replayer) return;
		try {
			if (m.type === 'frames') {
				fold.add(replayer.push(m.frames, m.receivedAt_ms));
				send({ type: 'pushed', frames: replayer.frameCount });
			} else if (m.type === 'finish') {
				fold.add(replayer.finish(m.endedAt_ms));
				send({ type: 'done', frameCount: replayer.frameCount, incidents: fold.incidents });
			}
		} catch (err) {
			replayer = null;
			fail(err);
		}
	});
}
