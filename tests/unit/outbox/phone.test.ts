// Phone verification over a real (in-memory) database with a recording SMS client: the code texted
// is the one accepted, once; it expires, and too many wrong guesses lock it.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openDatabase, type Db } from '../../../src/lib/server/db';
import { user } from '../../../src/lib/server/db/schema';
import type { SmsClient } from '../../../src/lib/server/sms/client';
import { confirmCode, getPhone, phoneSchema, startVerification } from '../../../src/lib/server/sms/phone';

let db: Db;
let close: () => Promise<void>;
const texts: { to: string; body: string }[] = [];
const sms: SmsClient = { send: async (to, body) => (texts.push({ to, body }), { ok: true, sid: `SM${texts.length}` }) };
const T0 = new Date(Date.UTC(2026, 0, 5, 3, 0, 0));
const later = (ms: number) => new Date(T0.getTime() + ms);
const lastCode = () => /(\d{6})/.exec(texts.at(-1)!.body)![1];

beforeAll(async () => {
	({ db, close } = await openDatabase('memory://', 'drizzle'));
	for (const id of ['u1', 'u2', 'u3'])
		await db.insert(user).values({ id, name: id, email: `${id}@lab.test`, emailVerified: true, createdAt: T0, updatedAt: T0 });
}, 60_000);
afterAll(async () => {
	await close();
});

describe('phone verification', () => {
	it('accepts the texted code once and marks the number verified', async () => {
		await startVerification(db, sms, 'u1', '+41445550123', T0);
		expect(texts.at(-1)!.to).toBe('+41445550123');
		const code = lastCode();
		await confirmCode(db, 'u1', code, later(60_000));
		expect((await getPhone(db, 'u1'))?.verifiedAt).toEqual(later(60_000));
		await expect(confirmCode(db, 'u1', code, later(61_000))).rejects.toThrow(/no code is waiting/);
	});

	it('refuses the code after ten minutes', async () => {
		await startVerification(db, sms, 'u2', '+41445550124', T0);
		await expect(confirmCode(db, 'u2', lastCode(), later(10 * 60_000 + 1))).rejects.toThrow(/expired/);
	});

	it('locks the code after five wrong guesses, even for the right one', async () => {
		await startVerification(db, sms, 'u3', '+41445550125', T0);
		const code = lastCode();
		const wrong = code === '123456' ? '654321' : '123456';
		for (let i = 0; i < 5; i++) await expect(confirmCode(db, 'u3', wrong, later(1000))).rejects.toThrow(/not right/);
		await expect(confirmCode(db, 'u3', code, later(2000))).rejects.toThrow(/too many/);
	});

	it('normalises spaces and refuses numbers not in international form', () => {
		expect(phoneSchema.parse({ number: '+41 44 555-01 23' }).number).toBe('+41445550123');
		expect(phoneSchema.safeParse({ number: '044 555 01 23' }).success).toBe(false);
	});
});
