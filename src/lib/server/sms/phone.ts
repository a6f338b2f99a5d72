// A person's phone number for text alerts, proven theirs by a 6-digit code sent to it. Only a hash
// of the code is stored; it expires after ten minutes and allows five guesses. The code is sent
// directly, not through the outbox: the person is waiting for it, and the outbox would keep it in clear.
import { createHash, randomInt, timingSafeEqual } from 'node:crypto';
import { eq } from 'drizzle-orm';
import { z } from 'zod';
import type { Db } from '../db';
import { phoneNumbers } from '../db/schema';
import type { SmsClient } from './client';

const CODE_TTL_MS = 10 * 60_000;
const MAX_GUESSES = 5;
const RESEND_AFTER_MS = 30_000;

export const phoneSchema = z.object({
	number: z
		.string()
		.transform((s) => s.replace(/[\s().-]/g, ''))
		.pipe(z.string().regex(/^\+[1-9]\d{6,14}$/, 'number must be in international form, such as +41 44 123 45 67'))
});
export const codeSchema = z.object({
	code: z
		.string()
		.trim()
		.regex(/^\d{6}$/, 'code is the 6 digits from the text message')
});

export class PhoneError extends Error {
	constructor(
		public status: 400 | 404 | 409 | 429 | 502 | 503,
		message: string
	) {
		super(message);
	}
}

const hashCode = (userId: string, code: string) => createHash('sha256').update(`${userId}:${code}`).digest('hex');

export async function getPhone(db: Db, userId: string) {
	const [row] = await db.select().from(phoneNumbers).where(eq(phoneNumbers.userId, userId));
	if (!row) return null;
	return { number: row.number, verifiedAt: row.verifiedAt, codePending: Boolean(row.codeHash) && !row.verifiedAt };
}

/** Saves the number unverified and texts it a code. */
export async function startVerification(db: Db, sms: SmsClient | null, userId: string, number: string, now = new Date()) {
	if (!sms) throw new PhoneError(503, 'text messages are not configured on this server (TWILIO_* settings)');
	const [existing] = await db.select().from(phoneNumbers).where(eq(phoneNumbers.userId, userId));
	if (existing?.codeHash && existing.number === number && now.getTime() - existing.updatedAt.getTime() < RESEND_AFTER_MS) {
		throw new PhoneError(429, 'a code was just sent to this number; wait half a minute before asking for another');
	}
	const code = String(randomInt(0, 1_000_000)).padStart(6, '0');
	const values = {
		number,
		verifiedAt: null,
		codeHash: hashCode(userId, code),
		codeExpiresAt: new Date(now.getTime() + CODE_TTL_MS),
		codeAttempts: 0,
		updatedAt: now
	};
	await db
		.insert(phoneNumbers)
		.values({ userId, ...values })
		.onConflictDoUpdate({ target: phoneNumbers.userId, set: values });
	const sent = await sms.send(number, `Your Phasewarden code is ${code}. It expires in 10 minutes.`);
	if (!sent.ok) throw new PhoneError(502, `the text could not be sent: ${sent.error}`);
}

export async function confirmCode(db: Db, userId: string, code: string, now = new Date()) {
	const [row] = await db.select().from(phoneNumbers).where(eq(phoneNumbers.userId, userId));
	if (!row?.codeHash || !row.codeExpiresAt) throw new PhoneError(404, 'no code is waiting: add your number first');
	if (row.codeExpiresAt <= now) throw new PhoneError(409, 'the code has expired: ask for a new one');
	if (row.codeAttempts >= MAX_GUESSES) throw new PhoneError(409, 'too many wrong codes: ask for a new one');
	const good = timingSafeEqual(Buffer.from(hashCode(userId, code)), Buffer.from(row.codeHash));
	if (!good) {
		await db
			.update(phoneNumbers)
			.set({ codeAttempts: row.codeAttempts + 1 })
			.where(eq(phoneNumbers.userId, userId));
		throw new PhoneError(400, 'that code is not right');
	}
	await db
		.update(phoneNumbers)
		.set({ verifiedAt: now, codeHash: null, codeExpiresAt: null, codeAttempts: 0, updatedAt: now })
		.where(eq(phoneNumbers.userId, userId));
}

export async function removePhone(db: Db, userId: string) {
	await db.delete(phoneNumbers).where(eq(phoneNumbers.userId, userId));
}
