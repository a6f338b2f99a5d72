// A person's morning-report settings: report time, time zone, setups followed. One zod schema for
// the settings form and PUT /api/reports/settings.
import { eq } from 'drizzle-orm';
import { z } from 'zod';
import { isTimeZone, REPORT_TIME } from '../../reports/schedule';
import type { Db } from '../db';
import { reportSettings, setupMembers, setups } from '../db/schema';
import { labTimeZone } from './time-zone';

export const reportSettingsSchema = z.object({
	enabled: z.boolean().default(true),
	reportTime: z.string().trim().regex(REPORT_TIME, 'report time must be HH:MM on a 24-hour clock, e.g. 08:00'),
	/** Empty or absent: the lab's time zone. */
	timeZone: z
		.string()
		.trim()
		.refine((tz) => tz === '' || isTimeZone(tz), 'unknown time zone; use an IANA name such as Europe/Vienna')
		.optional(),
	/** Absent or null: the setups the person is a member of. */
	followSetups: z.array(z.string().min(1)).max(200).nullable().optional()
});
export type ReportSettingsInput = z.infer<typeof reportSettingsSchema>;

export type ReportSettings = {
	enabled: boolean;
	reportTime: string;
	/** The person's own zone, or null for the lab's. */
	timeZone: string | null;
	/** The zone in force. */
	effectiveTimeZone: string;
	followSetups: string[] | null;
	armedAt_ms: number;
	lastReportUntil_ms: number | null;
};

function fromRow(row: typeof reportSettings.$inferSelect): ReportSettings {
	return {
		enabled: row.enabled,
		reportTime: row.reportTime,
		timeZone: row.timeZone,
		effectiveTimeZone: row.timeZone ?? labTimeZone(),
		followSetups: row.followSetups,
		armedAt_ms: row.armedAt.getTime(),
		lastReportUntil_ms: row.lastReportUntilMs
	};
}

/** The person's settings, created with the defaults (armed at `now_ms`) on first use. */
export async function getReportSettings(db: Db, userId: string, now_ms: number): Promise<ReportSettings> {
	await db
		.insert(reportSettings)
		.values({ userId, armedAt: new Date(now_ms) })
		.onConflictDoNothing();
	const [row] = await db.select().from(reportSettings).where(eq(reportSettings.userId, userId));
	return fromRow(row);
}

export async function saveReportSettings(db: Db, userId: string, input: ReportSettingsInput, now_ms: number): Promise<ReportSettings> {
	await getReportSettings(db, userId, now_ms);
	if (input.followSetups?.length) {
		const known = new Set((await db.select({ id: setups.id }).from(setups)).map((s) => s.id));
		const unknown = input.followSetups.filter((id) => !known.has(id));
		if (unknown.length) throw new RangeError(`followSetups: no setup with id ${unknown.join(', ')}`);
	}
	const [row] = await db
		.update(reportSettings)
		.set({
			enabled: input.enabled,
			reportTime: input.reportTime,
			timeZone: input.timeZone ? input.timeZone : null,
			followSetups: input.followSetups ?? null
		})
		.where(eq(reportSettings.userId, userId))
		.returning();
	return fromRow(row);
}

/**
 * The setups a person's report covers: those they chose, else those they are a member of, else
 * (a person in no setup, e.g. a new admin) every setup, so that a report is never empty by accident.
 */
export async function followedSetupIds(db: Db, userId: string, settings: Pick<ReportSettings, 'followSetups'>): Promise<string[]> {
	if (settings.followSetups && settings.followSetups.length) return settings.followSetups;
	const member = await db.select({ id: setupMembers.setupId }).from(setupMembers).where(eq(setupMembers.userId, userId));
	if (member.length) return member.map((m) => m.id);
	return (await db.select({ id: setups.id }).from(setups)).map((s) => s.id);
}
