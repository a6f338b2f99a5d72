// Messages of wire protocol v1 against DESIGN.md ("Wire protocol v1"): hello's run description,
// the frames envelope (1 to 500 frames), end, and the server's welcome / ack / error.
import { describe, expect, test } from 'vitest';
import {
	agentMessageSchema,
	describeZodError,
	ERROR_CODES,
	framesEnvelopeSchema,
	helloSchema,
	MAX_FRAMES_PER_MESSAGE,
	MAX_MESSAGE_BYTES,
	serverMessageSchema
} from '../../../src/lib/protocol/index.ts';

const hello = {
	type: 'hello',
	protocol: 1,
	agent: 'phasewarden-agent/0.1.0',
	run: { key: 'cd14-run7', name: 'Cooldown 14, run 7', order: 3, states: 6, mode_GHz: 5.0, operatingPoint: { bias_uV: 18, pump: 'on' } }
};

function path(result: { success: boolean; error?: import('zod').ZodError }): string | null {
	return result.success ? null : describeZodError(result.error!).split(':')[0];
}

describe('hello', () => {
	test('the example of DESIGN.md is accepted', () => {
		expect(helloSchema.safeParse(hello).success).toBe(true);
		expect(agentMessageSchema.safeParse(hello).success).toBe(true);
	});

	test('states must be M or 2M', () => {
		// Period tripling: M = 3 states (Kerr-type) or 2M = 6 (junction-type); common practice, see REFERENCES.md.
		for (const states of [3, 6]) expect(helloSchema.safeParse({ ...hello, run: { ...hello.run, states } }).success).toBe(true);
		for (const states of [2, 4, 5, 9]) {
			const r = helloSchema.safeParse({ ...hello, run: { ...hello.run, states } });
			expect(path(r)).toBe('run.states');
		}
	});

	test('order, mode and key are checked and named', () => {
		expect(path(helloSchema.safeParse({ ...hello, run: { ...hello.run, order: 1 } }))).toBe('run.order');
		expect(path(helloSchema.safeParse({ ...hello, run: { ...hello.run, mode_GHz: -5 } }))).toBe('run.mode_GHz');
		expect(path(helloSchema.safeParse({ ...hello, run: { ...hello.run, key: '' } }))).toBe('run.key');
	});
});

describe('frames envelope', () => {
	test('1 to 500 frames a message', () => {
		expect(MAX_FRAMES_PER_MESSAGE).toBe(500);
		expect(framesEnvelopeSchema.safeParse({ type: 'frames', frames: new Array(500).fill({}) }).success).toBe(true);
		expect(path(framesEnvelopeSchema.safeParse({ type: 'frames', frames: new Array(501).fill({}) }))).toBe('frames');
		expect(path(framesEnvelopeSchema.safeParse({ type: 'frames', frames: [] }))).toBe('frames');
	});

	test('a message is at most 4 MiB', () => {
		expect(MAX_MESSAGE_BYTES).toBe(4 * 1024 * 1024);
	});
});

describe('end and unknown messages', () => {
	test('end with and without a reason', () => {
		expect(agentMessageSchema.safeParse({ type: 'end', reason: 'cooldown over' }).success).toBe(true);
		expect(agentMessageSchema.safeParse({ type: 'end' }).success).toBe(true);
	});

	test('an unknown type is refused at type', () => {
		expect(path(agentMessageSchema.safeParse({ type: 'goodbye' }))).toBe('type');
	});
});

describe('server messages', () => {
	test('welcome, ack and error as DESIGN.md writes them', () => {
		expect(serverMessageSchema.safeParse({ type: 'welcome', run: 'r_1', lastSeq: 0 }).success).toBe(true);
		expect(serverMessageSchema.safeParse({ type: 'ack', seq: 42 }).success).toBe(true);
		expect(serverMessageSchema.safeParse({ type: 'error', code: 'invalid_frame', seq: 7, message: 'frames[0].lock: …' }).success).toBe(
			true
		);
		expect(path(serverMessageSchema.safeParse({ type: 'welcome', run: 'r_1', lastSeq: -1 }))).toBe('lastSeq');
	});

	test('the error codes are exactly those of DESIGN.md', () => {
		expect([...ERROR_CODES].sort()).toEqual(
			['invalid_json', 'invalid_message', 'invalid_frame', 'unauthorized', 'run_ended', 'too_large', 'protocol_unsupported'].sort()
		);
		expect(path(serverMessageSchema.safeParse({ type: 'error', code: 'teapot', message: 'x' }))).toBe('code');
	});
});

describe('describeZodError', () => {
	test('puts the prefix and the field path first', () => {
		const r = framesEnvelopeSchema.safeParse({ type: 'frames', frames: [] });
		expect(r.success).toBe(false);
		expect(describeZodError(r.error!, 'message')).toMatch(/^message\.frames: /);
	});
});
