// Kept morning reports: every scheduled or on-demand report, so last Tuesday's can be reopened.
import { randomUUID } from 'node:crypto';
import { and, desc, eq } from 'drizzle-orm';
import type { MorningReport } from '../../reports/report';
import type { Db } from '../db';
import { morningReports } from '../db/schema';

export type KeptReportRow = typeof morningReports.$inferSelect;

export async function keepReport(db: Db, userId: string | null, kind: 'scheduled' | 'on_demand', report: MorningReport): Promise<string> {
	const id = randomUUID();
	await db.insert(morningReports).values({
		id,
		userId,
		kind,
		sinceMs: report.since_ms,
		untilMs: report.until_ms,
		timeZone: report.timeZone,
		report: report as unknown as Record<string, unknown>,
		createdAt: new Date(report.generatedAt_ms)
	});
	return id;
}

export async function recordEmail(db: Db, id: string, status: 'sent' | 'failed' | 'skipped', error: string | null) {
	await db.update(morningReports).set({ emailStatus: status, emailError: error }).where(eq(morningReports.id, id));
}

/** A person's kept reports, newest first, without their bodies. */
export async function listKeptReports(db: Db, userId: string, limit = 200) {
	return db
		.select({
			id: morningReports.id,
			kind: morningReports.kind,
			sinceMs: morningReports.sinceMs,
			untilMs: morningReports.untilMs,
			timeZone: morningReports.timeZone,
			createdAt: morningReports.createdAt,
			emailStatus: morningReports.emailStatus
		})
		.from(morningReports)
		.where(eq(morningReports.userId, userId))
		.orderBy(desc(morningReports.untilMs), desc(morningReports.createdAt))
		.limit(limit);
}

/** One kept report of this person (another person's reads as absent). */
export async function getKeptReport(db: Db, id: string, userId: string): Promise<(KeptReportRow & { report: MorningReport }) | null> {
	const [row] = await db
		.select()
		.from(morningReports)
		.where(and(eq(morningReports.id, id), eq(morningReports.userId, userId)));
	return row ? { ...row, report: row.report as unknown as MorningReport } : null;
}
