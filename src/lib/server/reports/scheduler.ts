// Sends each person their morning report when their report time comes. State lives in the
// database (report_settings.last_report_until_ms, morning_reports), so a restart neither loses a
// morning nor sends one twice: the cursor moves in the same transaction that keeps the report,
// and the mail goes out after it (a crash in between loses that one e-mail, never the report).
import { eq } from 'drizzle-orm';
import { dueReport } from '../../reports/schedule';
import { reportHtml, reportSubject, reportText } from '../../reports/email';
import type { Db } from '../db';
import { reportSettings, user } from '../db/schema';
import type { Mailer } from '../notify/mailer';
import { buildMorningReport, type AnnotationSource } from './build';
import { followedSetupIds, getReportSettings } from './settings';
import { keepReport, recordEmail } from './store';

export type SchedulerOptions = {
	db: Db;
	mailer: Mailer | null;
	/** Base URL for the links in the e-mail. */
	origin: () => string;
	now: () => number;
	annotations?: AnnotationSource;
};

export type SentReport = { reportId: string; userId: string; since_ms: number; until_ms: number; email: 'sent' | 'failed' | 'skipped' };

/** Makes and sends every report due at `now`; returns what it did. */
export async function runDueReports(opts: SchedulerOptions): Promise<SentReport[]> {
	const { db } = opts;
	const now_ms = opts.now();
	const people = await db.select({ id: user.id, name: user.name, email: user.email }).from(user);
	const done: SentReport[] = [];
	for (const person of people) {
		const settings = await getReportSettings(db, person.id, now_ms);
		if (!settings.enabled) continue;
		const due = dueReport(now_ms, {
			armedAt_ms: settings.armedAt_ms,
			lastUntil_ms: settings.lastReportUntil_ms,
			reportTime: settings.reportTime,
			timeZone: settings.effectiveTimeZone
		});
		if (!due) continue;
		const report = await buildMorningReport(db, {
			setupIds: await followedSetupIds(db, person.id, settings),
			...due,
			timeZone: settings.effectiveTimeZone,
			now_ms,
			person,
			annotations: opts.annotations
		});
		const reportId = await db.transaction(async (tx) => {
			const id = await keepReport(tx as unknown as Db, person.id, 'scheduled', report);
			await tx.update(reportSettings).set({ lastReportUntilMs: due.until_ms }).where(eq(reportSettings.userId, person.id));
			return id;
		});
		let email: SentReport['email'] = 'skipped';
		if (opts.mailer && person.email) {
			const origin = opts.origin().replace(/\/$/, '');
			const result = await opts.mailer.send({
				to: person.email,
				subject: reportSubject(report),
				text: `${reportText(report, origin)}\nThis report stays at ${origin}/reports/${reportId}\n`,
				html: reportHtml(report, origin)
			});
			email = result.ok ? 'sent' : 'failed';
			await recordEmail(db, reportId, email, result.ok ? null : result.error);
		} else await recordEmail(db, reportId, 'skipped', opts.mailer ? 'no e-mail address' : 'no mail server configured');
		done.push({ reportId, userId: person.id, ...due, email });
	}
	return done;
}

/**
 * Checks for due reports every `every_ms` (one check at a time). Returns `tick` (run a check now,
 * after any one under way) and `stop`.
 */
export function startReportScheduler(opts: SchedulerOptions, every_ms = 60_000, isLeader: () => boolean = () => true) {
	let running: Promise<SentReport[]> = Promise.resolve([]);
	const tick = () => {
		running = running.catch(() => []).then(() => runDueReports(opts));
		return running;
	};
	// With several instances, only the leader's timer checks, so each report is sent once.
	const timer = setInterval(() => {
		if (isLeader()) void tick().catch((err) => console.error('morning reports failed', err));
	}, every_ms);
	timer.unref?.();
	return { tick, stop: () => clearInterval(timer) };
}
