// The demo lab's alerting: a rota whose first person is on call from today, their verified phone
// numbers, and a short escalation policy so a newcomer sees the secondary paged within minutes.
// The numbers are invented (the UK range set aside for drama); the SMS service is the local fake.
import type { Db } from '../db';
import { phoneNumbers } from '../db/schema';
import { saveRota } from '../oncall/rota-service';
import { labTimeZone } from '../reports/time-zone';

/** Minutes the demo's on-call person has to acknowledge a critical page before the secondary is paged. */
export const DEMO_CRITICAL_ACK_MIN = 5;

const ISO_WEEKDAY: Record<string, number> = { Mon: 1, Tue: 2, Wed: 3, Thu: 4, Fri: 5, Sat: 6, Sun: 7 };

/** Today's local date and ISO weekday in the lab's time zone. */
export function localToday(now: Date, timeZone: string): { date: string; weekday: number } {
	const date = new Intl.DateTimeFormat('en-CA', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit' }).format(now);
	const weekday = ISO_WEEKDAY[new Intl.DateTimeFormat('en-US', { timeZone, weekday: 'short' }).format(now)];
	return { date, weekday };
}

/**
 * Rota `people` (in order) on a setup, handed over today at 00:00 lab time, so people[0] is primary
 * and people[1] secondary for the whole first week; each of them gets a verified number.
 */
export async function seedDemoOnCall(db: Db, setupId: string, people: { id: string; phone: string }[], actorId: string, now = new Date()) {
	const today = localToday(now, labTimeZone());
	await saveRota(
		db,
		setupId,
		{
			members: people.map((p) => p.id),
			handoverWeekday: today.weekday,
			handoverTime: '00:00',
			startsOn: today.date,
			criticalAckMin: DEMO_CRITICAL_ACK_MIN,
			warningAckMin: 15
		},
		actorId
	);
	for (const p of people) {
		// Verified directly: the demo's people never receive the fake's code, and the rota needs a number that pages.
		await db.insert(phoneNumbers).values({ userId: p.id, number: p.phone, verifiedAt: now, updatedAt: now }).onConflictDoNothing();
	}
}
