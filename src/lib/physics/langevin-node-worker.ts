// Node worker_threads entry for Langevin jobs: the same handler as the Web Worker, on parentPort.
// From source it needs a TypeScript loader in the worker, e.g.
//   new Worker(new URL('./langevin-node-worker.ts', import.meta.url), { execArgv: ['--import', 'tsx'] })
// (a process started by tsx passes its loader on to workers by default).
import { isMainThread, parentPort } from 'node:worker_threads';
import { createJobHandler } from './langevin-worker';

if (!isMainThread && parentPort) {
	const port = parentPort;
	const handle = createJobHandler((message) => port.postMessage(message));
	port.on('message', handle);
}
