// Strings that reach a text or jsonb column: PostgreSQL refuses the character U+0000 in text and
// jsonb (PostgreSQL manual, "Character Types" and "JSON Types"), and UTF-16 code units D800–DFFF
// only form a character in a high-then-low pair (Unicode Standard, chapter 3, D91), so a lone one
// has no UTF-8 encoding. Lone surrogates are written as JSON escapes, the form that survives JSON.parse.
import { describe, expect, test } from 'vitest';
import { z } from 'zod';
import {
	agentMessageSchema,
	describeZodError,
	LONE_SURROGATE_MESSAGE,
	NUL_MESSAGE,
	safeText,
	textProblem
} from '../../../src/lib/protocol/index.ts';

const fromJson = (escaped: string) => JSON.parse(`"${escaped}"`) as string;

describe('textProblem', () => {
	test('plain and non-ASCII text is fine, including a surrogate pair (an emoji)', () => {
		expect(textProblem('Cooldown 14, run 7: 18 µV')).toBeNull();
		expect(textProblem(fromJson('fridge \\ud83e\\uddca'))).toBeNull();
		expect(textProblem('🧊')).toBeNull();
		expect(textProblem('')).toBeNull();
	});

	test('NUL anywhere is named', () => {
		expect(textProblem(fromJson('\\u0000'))).toBe(NUL_MESSAGE);
		expect(textProblem('run\u0000 7')).toBe(NUL_MESSAGE);
		expect(NUL_MESSAGE).toBe('must not contain NUL (U+0000)');
	});

	test('a lone high or low surrogate, or a pair in the wrong order, is named', () => {
		for (const escaped of ['\\ud800', 'a\\ud800b', 'end \\udbff', '\\udc00', 'x\\udfffy', '\\ude00\\ud83d']) {
			expect(textProblem(fromJson(escaped)), escaped).toBe(LONE_SURROGATE_MESSAGE);
		}
		expect(LONE_SURROGATE_MESSAGE).toBe('must not contain an unpaired surrogate');
	});

	test('agrees with String.prototype.isWellFormed where Node has it', () => {
		const isWellFormed = (String.prototype as { isWellFormed?: () => boolean }).isWellFormed;
		if (!isWellFormed) return;
		for (const escaped of ['\\ud800', '\\udc00\\ud800', '\\ud83d\\ude00', 'ok', '\\ud83d\\ude00\\ud83d']) {
			const text = fromJson(escaped);
			expect(textProblem(text) === LONE_SURROGATE_MESSAGE, escaped).toBe(!isWellFormed.call(text));
		}
	});
});

describe('safeText keeps the string rules it wraps', () => {
	const name = safeText(z.string().min(1).max(5));
	test('length rules still apply and good text passes', () => {
		expect(name.safeParse('abc').success).toBe(true);
		expect(name.safeParse('').success).toBe(false);
		expect(name.safeParse('abcdef').success).toBe(false);
	});
});

const hello = {
	type: 'hello',
	protocol: 1,
	agent: 'phasewarden-agent/0.1.0',
	run: { key: 'cd14-run7', name: 'Cooldown 14, run 7', order: 3, states: 6, mode_GHz: 5, operatingPoint: { pump: 'on' } }
};
const withRun = (run: object) => ({ ...hello, run: { ...hello.run, ...run } });

function problem(message: unknown): string | null {
	const r = agentMessageSchema.safeParse(message);
	return r.success ? null : describeZodError(r.error);
}

describe('every string of the agent messages', () => {
	test('the same messages with clean text, emoji included, are accepted', () => {
		expect(problem(hello)).toBeNull();
		expect(problem(withRun({ name: 'Run 7 🧊', operatingPoint: { 'note 🧊': 'cold 🧊' } }))).toBeNull();
		expect(problem({ type: 'end', reason: 'done 🧊' })).toBeNull();
	});

	test.each<[string, unknown, string]>([
		['hello.agent', { ...hello, agent: fromJson('agent\\u0000') }, 'agent'],
		['run.key', withRun({ key: fromJson('k\\u0000') }), 'run.key'],
		['run.name', withRun({ name: fromJson('a\\u0000b') }), 'run.name'],
		['operatingPoint string value', withRun({ operatingPoint: { pump: fromJson('o\\u0000n') } }), 'run.operatingPoint.pump'],
		['end.reason', { type: 'end', reason: fromJson('\\u0000') }, 'reason']
	])('NUL in %s is named', (_where, message, path) => {
		expect(problem(message)).toBe(`${path}: ${NUL_MESSAGE}`);
	});

	test.each<[string, unknown, string]>([
		['hello.agent', { ...hello, agent: fromJson('agent\\ud800') }, 'agent'],
		['run.key', withRun({ key: fromJson('\\udc00k') }), 'run.key'],
		['run.name', withRun({ name: fromJson('a\\ud800b') }), 'run.name'],
		['operatingPoint string value', withRun({ operatingPoint: { pump: fromJson('\\ud800') } }), 'run.operatingPoint.pump'],
		['end.reason', { type: 'end', reason: fromJson('stopped \\udbff') }, 'reason']
	])('a lone surrogate in %s is named', (_where, message, path) => {
		expect(problem(message)).toBe(`${path}: ${LONE_SURROGATE_MESSAGE}`);
	});

	test('operatingPoint keys are checked too', () => {
		expect(problem(withRun({ operatingPoint: { [fromJson('bias\\u0000')]: 1 } }))).toMatch(
			/^run\.operatingPoint\..*: must not contain NUL \(U\+0000\)$/
		);
		expect(problem(withRun({ operatingPoint: { [fromJson('\\ud800')]: 1 } }))).toMatch(
			/^run\.operatingPoint\..*: must not contain an unpaired surrogate$/
		);
	});
});
