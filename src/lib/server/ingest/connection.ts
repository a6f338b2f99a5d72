// One agent connection speaking wire protocol v1: hello → welcome, frames → acks, end.
import type { WebSocket } from 'ws';
import { checkFrameAgainstRun, frameSchema, type Frame } from '../../protocol/frame';
import {
	agentMessageSchema,
	describeZodError,
	MAX_MESSAGE_BYTES,
	PROTOCOL_VERSION,
	type ErrorCode,
	type ServerMessage
} from '../../protocol/messages';
import type { Ingest } from './ingest';
import type { RunWriter } from './run-writer';

export interface TokenInfo {
	id: string;
	setupId: string;
	label: string;
}

export class AgentConnection {
	private writer: RunWriter | null = null;
	/** Set on the first hello, before its async attach, so a second hello sent right behind it is refused. */
	private helloSeen = false;
	alive = true;

	constructor(
		private ws: WebSocket,
		readonly token: TokenInfo,
		private ingest: Ingest
	) {
		ws.on('message', (data, isBinary) => this.onMessage(data as Buffer, isBinary));
		ws.on('pong', () => (this.alive = true));
		ws.on('close', () => this.ingest.detach(this));
		ws.on('error', () => ws.terminate());
	}

	get runId() {
		return this.writer?.run.id ?? null;
	}

	send(message: ServerMessage) {
		if (this.ws.readyState === this.ws.OPEN) this.ws.send(JSON.stringify(message));
	}

	close(code = 1000, reason = '') {
		this.ws.close(code, reason);
	}

	terminate() {
		this.ws.terminate();
	}

	ping() {
		this.alive = false;
		this.ws.ping();
	}

	private error(code: ErrorCode, message: string, seq?: number) {
		this.send(seq === undefined ? { type: 'error', code, message } : { type: 'error', code, seq, message });
	}

	private async onMessage(data: Buffer, isBinary: boolean) {
		if (isBinary) return this.error('invalid_message', 'messages are JSON text, not binary');
		if (data.length > MAX_MESSAGE_BYTES) {
			// Answer first: close() sends its close frame after the error on the same socket.
			this.error('too_large', `a message is at most ${MAX_MESSAGE_BYTES} bytes (4 MiB), this one has ${data.length}`);
			return this.close(1009, 'message too big');
		}
		let json: unknown;
		try {
			json = JSON.parse(data.toString('utf8'));
		} catch (err) {
			return this.error('invalid_json', `not valid JSON: ${(err as Error).message}`);
		}
		const parsed = agentMessageSchema.safeParse(json);
		if (!parsed.success) return this.error('invalid_message', describeZodError(parsed.error));
		const msg = parsed.data;
		try {
			if (msg.type === 'hello') await this.onHello(msg);
			else if (msg.type === 'frames') this.onFrames(msg.frames);
			else await this.onEnd(msg.reason ?? 'ended by the agent');
		} catch (err) {
			console.error('ingest: message failed', err);
			this.close(1011, 'server error');
		}
	}

	private async onHello(msg: Extract<import('../../protocol/messages').AgentMessage, { type: 'hello' }>) {
		if (this.helloSeen) return this.error('invalid_message', 'hello: this connection already sent hello');
		this.helloSeen = true;
		if (msg.protocol !== PROTOCOL_VERSION) {
			this.error('protocol_unsupported', `protocol: this server speaks version ${PROTOCOL_VERSION}, not ${msg.protocol}`);
			return this.close(1002, 'protocol unsupported');
		}
		const result = await this.ingest.attach(this, msg);
		if ('error' in result) {
			// Another instance still writes the run: no protocol error (the run is fine), just "try again".
			if (result.error === 'busy') return this.close(1013, 'run busy on another instance; reconnect');
			this.error(result.error, result.message);
			return this.close(1008, result.error);
		}
		this.writer = result.writer;
		this.send({ type: 'welcome', run: result.writer.run.id, lastSeq: result.writer.lastSeq });
	}

	private onFrames(raw: unknown[]) {
		const writer = this.writer;
		if (!writer) return this.error('invalid_message', 'frames: send hello before frames');
		if (writer.run.status === 'ended') return this.error('run_ended', 'this run has ended; start a new run key');
		const valid: Frame[] = [];
		raw.forEach((candidate, i) => {
			const seq = seqOf(candidate);
			const parsed = frameSchema.safeParse(candidate);
			if (!parsed.success) return this.error('invalid_frame', describeZodError(parsed.error, `frames[${i}]`), seq);
			const problem = checkFrameAgainstRun(parsed.data, writer.run.states);
			if (problem) return this.error('invalid_frame', `frames[${i}].${problem.path}: ${problem.message}`, seq);
			valid.push(parsed.data);
		});
		if (valid.length) writer.enqueue(valid);
	}

	private async onEnd(reason: string) {
		if (!this.writer) return this.error('invalid_message', 'end: send hello first');
		await this.ingest.endRun(this.writer, reason);
		this.close(1000, 'run ended');
	}
}

function seqOf(candidate: unknown): number | undefined {
	const seq = (candidate as { seq?: unknown } | null)?.seq;
	return typeof seq === 'number' && Number.isInteger(seq) ? seq : undefined;
}
