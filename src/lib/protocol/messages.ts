// Messages of wire protocol v1, agent → server and server → agent.
import { z } from 'zod';
import { safeText } from './safe-text';

export const PROTOCOL_VERSION = 1;
export const MAX_FRAMES_PER_MESSAGE = 500;
/** Largest text message the server accepts, in bytes. */
export const MAX_MESSAGE_BYTES = 4 * 1024 * 1024;
/**
 * Where the WebSocket library stops reading (its maxPayload). Between MAX_MESSAGE_BYTES and this the
 * server still reads the message, so it can answer `too_large` before closing; above it the socket
 * is closed with 1009 and no answer, which bounds the memory one connection can take.
 */
export const HARD_MAX_MESSAGE_BYTES = MAX_MESSAGE_BYTES * 16;

export const runDescriptionSchema = z
	.object({
		key: safeText(z.string().min(1).max(200)),
		name: safeText(z.string().min(1).max(200)),
		order: z.number().int().min(2).max(8),
		states: z.number().int().min(2).max(16),
		mode_GHz: z.number().positive().max(100),
		operatingPoint: z.record(safeText(z.string()), z.union([z.number(), safeText(z.string()), z.boolean()])).optional()
	})
	.refine((run) => run.states === run.order || run.states === 2 * run.order, {
		message: 'states must be order (M) or twice the order (2M)',
		path: ['states']
	});

export const helloSchema = z.object({
	type: z.literal('hello'),
	protocol: z.number().int(),
	agent: safeText(z.string().min(1).max(100)),
	run: runDescriptionSchema
});

/** Frames are validated one by one after the envelope, so one bad frame names its own seq. */
export const framesEnvelopeSchema = z.object({
	type: z.literal('frames'),
	frames: z.array(z.unknown()).min(1).max(MAX_FRAMES_PER_MESSAGE)
});

export const endSchema = z.object({
	type: z.literal('end'),
	reason: safeText(z.string().max(500)).optional()
});

export const agentMessageSchema = z.discriminatedUnion('type', [helloSchema, framesEnvelopeSchema, endSchema]);

export type Hello = z.infer<typeof helloSchema>;
export type RunDescription = z.infer<typeof runDescriptionSchema>;
export type AgentMessage = z.infer<typeof agentMessageSchema>;

export const ERROR_CODES = [
	'invalid_json',
	'invalid_message',
	'invalid_frame',
	'unauthorized',
	'run_ended',
	'too_large',
	'protocol_unsupported'
] as const;
export type ErrorCode = (typeof ERROR_CODES)[number];

export type ServerMessage =
	| { type: 'welcome'; run: string; lastSeq: number }
	| { type: 'ack'; seq: number }
	| { type: 'error'; code: ErrorCode; seq?: number; message: string };

export const serverMessageSchema = z.discriminatedUnion('type', [
	z.object({ type: z.literal('welcome'), run: z.string(), lastSeq: z.number().int().min(0) }),
	z.object({ type: z.literal('ack'), seq: z.number().int().min(0) }),
	z.object({
		type: z.literal('error'),
		code: z.enum(ERROR_CODES),
		seq: z.number().int().optional(),
		message: z.string()
	})
]);

/** "frames[3].counts: expected 6 entries" — the field path first, as the protocol promises. */
export function describeZodError(error: z.ZodError, prefix = ''): string {
	let issue = error.issues[0];
	// A bad record key is reported as a wrapper issue; the key's own check holds the useful message.
	if (issue.code === 'invalid_key' && issue.issues?.[0]) {
		issue = { ...issue.issues[0], path: [...issue.path, ...issue.issues[0].path] } as typeof issue;
	}
	const path = [prefix, ...issue.path.map((p) => (typeof p === 'number' ? `[${p}]` : `.${String(p)}`))].join('').replace(/^\./, '');
	return `${path || '(message)'}: ${issue.message}`;
}
