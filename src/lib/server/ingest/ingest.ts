// The ingest service: authenticates agent sockets, keeps one writer per run, acks after commit,
// publishes committed frames and incidents live, and ticks the clock-driven detectors.
// With several instances on one PostgreSQL server, a run's writer lives where its lease is
// (cluster/): a hello for a run another instance holds asks that instance to hand it over, and the
// welcome's lastSeq is read from the database once the lease is ours.
import type { IncomingMessage } from 'node:http';
import type { Duplex } from 'node:stream';
import { eq } from 'drizzle-orm';
import { WebSocketServer } from 'ws';
import type { DetectorStatus, StatusOptions } from '../../detect/status';
import type { Hello } from '../../protocol/messages';
import { HARD_MAX_MESSAGE_BYTES } from '../../protocol/messages';
import { singleInstance, type Cluster, type ControlMessage } from '../cluster/cluster';
import type { Db } from '../db';
import { runs } from '../db/schema';
import type { IncidentRow } from '../incidents/service';
import type { LiveBus } from '../live/bus';
import { getSetupRules } from '../rules/service';
import { runFacts, runInfoFor } from '../runs/detector-context';
import { endRun, findOrCreateRun, publicRun } from '../runs/service';
import { findActiveToken, markTokenUsed } from '../setups/tokens';
import { AgentConnection } from './connection';
import { GroupCommitter } from './group-commit';
import type { Frame } from '../../protocol/frame';
import { DEFAULT_SNAPSHOT_POLICY, RunWriter, type CommitResult, type ImportBatchOutcome, type SnapshotPolicy } from './run-writer';

export const AGENT_STREAM_PATH = '/api/agent/stream';
/** Close code for a socket whose token was revoked; the agent's reconnect then meets a 401 and stops. */
export const CLOSE_TOKEN_REVOKED = 4001;
const HEARTBEAT_MS = 15_000;
/** Close code for a socket whose run moved to another instance; the agent reconnects and resumes there. */
export const CLOSE_RUN_MOVED = 4002;
/** How long a hello waits for another instance to hand its run over before the agent is told to retry. */
const TAKE_OVER_WAIT_MS = 10_000;
/** How often the waiting instance asks again (the holder may have taken the run up again to tick it). */
const TAKE_OVER_ASK_MS = 1000;
/** After handing a run over, the leader leaves it this long to the instance that asked, before ticking it itself. */
const HANDED_OVER_QUIET_MS = 30_000;

/** Another instance holds the run and did not let go in time. */
class RunHeldElsewhere extends Error {}

export interface IngestHooks {
	incidentOpened(incident: IncidentRow): void;
	incidentResolved(incident: IncidentRow): void;
}

export class Ingest {
	// Messages over the protocol's limit are answered `too_large` by the connection; this bound only
	// stops the WebSocket library from buffering something absurd.
	private wss = new WebSocketServer({ noServer: true, maxPayload: HARD_MAX_MESSAGE_BYTES });
	private writers = new Map<string, RunWriter>();
	private opening = new Map<string, Promise<RunWriter>>();
	private connections = new Set<AgentConnection>();
	private timers: NodeJS.Timeout[] = [];
	/** Runs this instance handed to another, and when. */
	private handedOver = new Map<string, number>();
	private committer: GroupCommitter;

	constructor(
		private db: Db,
		private bus: LiveBus,
		private hooks: IngestHooks,
		silenceCheckMs: number,
		private snapshotPolicy: SnapshotPolicy = DEFAULT_SNAPSHOT_POLICY,
		private cluster: Cluster = singleInstance()
	) {
		this.committer = new GroupCommitter(db);
		cluster.onMessage((kind, body) => {
			if (kind === 'control')
				void this.onControl(body as ControlMessage).catch((err) => console.error('ingest: cluster message failed', err));
		});
		cluster.onLeasesLost(() => this.leasesLost());
		this.timers.push(setInterval(() => this.heartbeat(), HEARTBEAT_MS));
		this.timers.push(setInterval(() => void this.tickClock(Date.now()), silenceCheckMs));
		// Runs that went quiet still get their last frames' detector state saved.
		this.timers.push(setInterval(() => void this.saveStaleSnapshots(Date.now()), Math.max(1000, snapshotPolicy.everyMs / 2)));
		for (const t of this.timers) t.unref();
	}

	/** The HTTP upgrade: a missing or revoked token gets 401 before any WebSocket is made. */
	async handleUpgrade(req: IncomingMessage, socket: Duplex, head: Buffer) {
		const header = req.headers.authorization ?? '';
		const secret = header.startsWith('Bearer ') ? header.slice(7).trim() : '';
		const token = secret ? await findActiveToken(this.db, secret) : null;
		if (!token) {
			socket.write(
				'HTTP/1.1 401 Unauthorized\r\nContent-Type: text/plain\r\nConnection: close\r\n\r\nagent token missing, unknown or revoked\n'
			);
			socket.destroy();
			return;
		}
		await markTokenUsed(this.db, token.id);
		this.wss.handleUpgrade(req, socket, head, (ws) => {
			this.connections.add(new AgentConnection(ws, { id: token.id, setupId: token.setupId, label: token.label }, this));
		});
	}

	/** Binds a connection to its run (created on first hello); a newer connection for a run replaces the older. */
	async attach(conn: AgentConnection, hello: Hello): Promise<{ writer: RunWriter } | { error: 'run_ended' | 'busy'; message: string }> {
		const run = await findOrCreateRun(this.db, conn.token.setupId, hello.run, hello.agent);
		if (run.status === 'ended') return { error: 'run_ended', message: `run "${hello.run.key}" has ended; start a new run key` };
		if (run.states !== hello.run.states) {
			return {
				error: 'run_ended',
				message: `run "${hello.run.key}" was started with ${run.states} states, not ${hello.run.states}; use a new run key`
			};
		}
		for (const other of this.connections) {
			if (other !== conn && other.runId === run.id) other.close(4000, 'replaced by a newer connection');
		}
		let writer: RunWriter;
		try {
			writer = (await this.writerFor(run.id, 'take-over'))!;
		} catch (err) {
			if (!(err instanceof RunHeldElsewhere)) throw err;
			return { error: 'busy', message: err.message };
		}
		await writer.idle();
		this.bus.publish({ type: 'run', runId: run.id, setupId: run.setupId, run: publicRun(writer.run) });
		return { writer };
	}

	/** A revoked token's open sockets close now rather than streaming on until they happen to drop. */
	closeToken(tokenId: string, tellOthers = true): number {
		if (tellOthers) this.cluster.send('control', { type: 'token-revoked', tokenId });
		let closed = 0;
		for (const conn of this.connections) {
			if (conn.token.id !== tokenId) continue;
			conn.close(CLOSE_TOKEN_REVOKED, 'agent token revoked');
			closed++;
		}
		return closed;
	}

	detach(conn: AgentConnection) {
		this.connections.delete(conn);
	}

	async endRun(writer: RunWriter, reason: string) {
		await writer.idle();
		await writer.applyEngine((engine) => engine.endRun(Date.now()));
		const ended = await endRun(this.db, writer.run.id, reason);
		if (ended) {
			writer.run = ended;
			this.bus.publish({
				type: 'run',
				runId: ended.id,
				setupId: ended.setupId,
				run: publicRun(ended),
				detectors: writer.engine.status({ runEnded: true })
			});
		}
		this.dropWriter(writer);
	}

	/** Whether an agent is streaming this run right now. */
	isStreaming(runId: string): boolean {
		return [...this.connections].some((c) => c.runId === runId);
	}

	/**
	 * Stores frames from a file through the run's own writer, so they take turns with live commits
	 * and the writer's gap list and rollup cache stay true. `onBatch` hears each batch's outcome.
	 */
	async importFrames(runId: string, batches: AsyncIterable<Frame[]>, onBatch: (outcome: ImportBatchOutcome, frames: number) => void) {
		const writer = (await this.writerFor(runId, 'take-over'))!;
		try {
			for await (const batch of batches) onBatch(await writer.importBatch(batch), batch.length);
		} finally {
			// An ended run gets no more frames from an agent: its writer need not stay.
			if (writer.run.status === 'ended' && !this.isStreaming(runId) && this.writers.get(runId) === writer) {
				await writer.idle();
				// The run row is current before the writer's copy of it is forgotten.
				await writer.saveSnapshotIfStale(Date.now(), 0);
				this.dropWriter(writer);
			}
			this.bus.publish({ type: 'run', runId, setupId: writer.run.setupId, run: publicRun(writer.run) });
		}
	}

	/**
	 * The run's writer, opened here if need be. 'take-over' asks another instance holding the run to
	 * hand it over (and throws RunHeldElsewhere if it does not in time); 'if-free' gives null instead.
	 */
	private async writerFor(runId: string, mode: 'take-over' | 'if-free'): Promise<RunWriter | null> {
		const existing = this.writers.get(runId);
		if (existing && !existing.failed) return existing;
		const pending = this.opening.get(runId);
		if (pending) return pending;
		if (!(await this.cluster.tryLeaseRun(runId))) {
			if (mode === 'if-free') return null;
			await this.takeOver(runId);
		}
		// Another caller may have opened it while the lease was being asked for.
		const again = this.writers.get(runId);
		if (again && !again.failed) return again;
		let opening = this.opening.get(runId);
		if (!opening) {
			opening = this.openWriter(runId)
				.catch(async (err) => {
					await this.cluster.releaseRun(runId);
					throw err;
				})
				.finally(() => this.opening.delete(runId));
			this.opening.set(runId, opening);
		}
		return opening;
	}

	/** Asks the instance holding the run to let go, and waits for its lease. */
	private async takeOver(runId: string) {
		const deadline = Date.now() + TAKE_OVER_WAIT_MS;
		let askedAt = 0;
		while (Date.now() < deadline) {
			if (Date.now() - askedAt >= TAKE_OVER_ASK_MS) {
				this.cluster.send('control', { type: 'release-run', runId });
				askedAt = Date.now();
			}
			await new Promise((r) => setTimeout(r, 50));
			if (await this.cluster.tryLeaseRun(runId)) return;
		}
		throw new RunHeldElsewhere(`run ${runId} is being written by another instance that did not hand it over; try again`);
	}

	/** Another instance wants a run this one writes: commit what is queued, save, and let go. */
	private async handOver(runId: string) {
		const opening = this.opening.get(runId);
		if (opening) await opening.catch(() => {});
		const writer = this.writers.get(runId);
		if (writer) {
			writer.retire();
			for (const conn of this.connections) if (conn.runId === runId) conn.close(CLOSE_RUN_MOVED, 'run taken over by another instance');
			await writer.idle();
			await writer.saveSnapshotIfStale(Date.now(), 0);
			if (this.writers.get(runId) === writer) this.writers.delete(runId);
			writer.release();
		}
		this.handedOver.set(runId, Date.now());
		await this.cluster.releaseRun(runId);
	}

	private dropWriter(writer: RunWriter) {
		const runId = writer.run.id;
		if (this.writers.get(runId) !== writer) return;
		this.writers.delete(runId);
		writer.release();
		void this.cluster.releaseRun(runId);
	}

	/** This instance's leases are gone (its database link dropped): another may write its runs now. */
	private leasesLost() {
		for (const writer of this.writers.values()) {
			writer.retire();
			writer.release();
		}
		this.writers.clear();
		// The agents reconnect, to whichever instance now can take their runs.
		for (const conn of this.connections) if (conn.runId) conn.close(1012, 'this instance lost its database link');
	}

	private async onControl(message: ControlMessage) {
		if (message.type === 'release-run') return this.handOver(message.runId);
		if (message.type === 'token-revoked') return void this.closeToken(message.tokenId, false);
		if (message.type === 'rules-changed') return this.rulesChanged(message.setupId, await getSetupRules(this.db, message.setupId), false);
		if (message.type === 'run-facts-changed') return this.runFactsChanged(message.setupId, false);
	}

	private async openWriter(runId: string): Promise<RunWriter> {
		const [run] = await this.db.select().from(runs).where(eq(runs.id, runId));
		const [rules, info] = await Promise.all([getSetupRules(this.db, run.setupId), runInfoFor(this.db, run)]);
		const writer = await RunWriter.open(
			this.db,
			this.committer,
			run,
			rules,
			info,
			this.snapshotPolicy,
			(result) => this.committed(result),
			(err) => this.failed(writer, err)
		);
		this.writers.set(runId, writer);
		// A restored engine may carry rules or rate models from before a change made while no agent was connected.
		const { runId: _r, states: _s, order: _o, mode_GHz: _m, openedAt_ms: _t, ...facts } = info;
		void writer.applyEngine((engine) => [...engine.setRules(rules, Date.now()), ...engine.setRun(facts, Date.now())]);
		return writer;
	}

	private committed(result: CommitResult) {
		const { run } = result;
		for (const conn of this.connections) {
			if (conn.runId === run.id) conn.send({ type: 'ack', seq: result.lastSeq });
		}
		const newest = result.stored.at(-1);
		if (newest) this.bus.publish({ type: 'frames', runId: run.id, setupId: run.setupId, frames: result.stored });
		// With a new frame the detectors' status may have changed; it is cheap to read (no copy).
		const detectors = newest ? this.engineStatus(run.id, { lastFrame: newest }) : null;
		this.bus.publish({ type: 'run', runId: run.id, setupId: run.setupId, run: publicRun(run), ...(detectors ? { detectors } : {}) });
		for (const i of result.opened) {
			this.bus.publish({ type: 'incident', runId: run.id, setupId: run.setupId, incident: i });
			this.hooks.incidentOpened(i);
		}
		for (const i of result.resolved) {
			this.bus.publish({ type: 'incident', runId: run.id, setupId: run.setupId, incident: i });
			this.hooks.incidentResolved(i);
		}
	}

	/** Whether each detector of a run can see, from its live writer's engine; null when no writer holds the run. */
	engineStatus(runId: string, options: StatusOptions = {}): DetectorStatus[] | null {
		const writer = this.writers.get(runId);
		if (!writer || writer.failed) return null;
		return writer.engine.status({ ...options, runEnded: writer.run.status === 'ended' });
	}

	private failed(writer: RunWriter, err: Error) {
		const runId = writer.run.id;
		console.error(`ingest: commit for run ${runId} failed; the agent will resend unacked frames`, err);
		// Drop the writer and its sockets: the agent reconnects, a new writer restores the detectors
		// from the database, the agent learns lastSeq and resends.
		this.dropWriter(writer);
		for (const conn of this.connections) if (conn.runId === runId) conn.close(1011, 'commit failed');
	}

	private async saveStaleSnapshots(now_ms: number) {
		await Promise.all([...this.writers.values()].map((w) => w.saveSnapshotIfStale(now_ms)));
	}

	/** New rules for a setup apply to its live runs from the next frame on. */
	async rulesChanged(setupId: string, rules: unknown, tellOthers = true) {
		if (tellOthers) this.cluster.send('control', { type: 'rules-changed', setupId });
		const now = Date.now();
		await Promise.all(
			[...this.writers.values()].filter((w) => w.run.setupId === setupId).map((w) => w.applyEngine((engine) => engine.setRules(rules, now)))
		);
	}

	/** A new rate model (or nominal temperature) for a setup: its live runs predict with it from now on. */
	async runFactsChanged(setupId: string, tellOthers = true) {
		if (tellOthers) this.cluster.send('control', { type: 'run-facts-changed', setupId });
		const now = Date.now();
		await Promise.all(
			[...this.writers.values()]
				.filter((w) => w.run.setupId === setupId)
				.map(async (w) => {
					const facts = await runFacts(this.db, w.run);
					await w.applyEngine((engine) => engine.setRun(facts, now));
				})
		);
	}

	/**
	 * Clock-driven detectors (agent_silent) for every open run, including runs with no live socket.
	 * Each instance ticks the runs it writes; the leader also takes up runs nobody writes.
	 */
	async tickClock(now_ms: number) {
		const open = await this.db.select({ id: runs.id }).from(runs).where(eq(runs.status, 'open'));
		const leader = this.cluster.isLeader();
		for (const [id, at] of this.handedOver) if (now_ms - at > HANDED_OVER_QUIET_MS) this.handedOver.delete(id);
		for (const { id } of open) {
			if (!this.writers.has(id) && (!leader || this.handedOver.has(id))) continue;
			const writer = await this.writerFor(id, 'if-free');
			if (!writer) continue;
			await writer.applyEngine((engine) => engine.onClock(now_ms), { snapshot: 'on-event' });
		}
	}

	private heartbeat() {
		for (const conn of this.connections) {
			if (!conn.alive) conn.terminate();
			else conn.ping();
		}
	}

	/** Waits until every queued frame is committed and saves every detector state (used at shutdown). */
	async flush() {
		await Promise.all([...this.writers.values()].map((w) => w.idle()));
		await Promise.all([...this.writers.values()].map((w) => w.saveSnapshotIfStale(Date.now(), 0)));
	}

	close() {
		for (const t of this.timers) clearInterval(t);
		for (const conn of this.connections) conn.close(1001, 'server shutting down');
		this.wss.close();
	}
}
