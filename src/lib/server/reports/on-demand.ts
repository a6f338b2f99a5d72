// A report for a person over any span they ask for: their followed setups, their time zone.
import { z } from 'zod';
import type { MorningReport } from '../../reports/report';
import type { Db } from '../db';
import { buildMorningReport, type AnnotationSource } from './build';
import { followedSetupIds, getReportSettings } from './settings';

const ms = z.coerce.number().int('must be a whole number of ms').min(0, 'must not be negative');
export const reportSpanSchema = z
	.object({ since_ms: ms.optional(), until_ms: ms.optional() })
	.refine((q) => q.since_ms === undefined || q.until_ms === undefined || q.since_ms < q.until_ms, {
		message: 'since_ms must be before until_ms',
		path: ['since_ms']
	});

/** Without until_ms the report ends now; without since_ms it starts 24 h before its end. */
export async function reportForPerson(
	db: Db,
	person: { id: string; name: string; email: string },
	span: z.infer<typeof reportSpanSchema>,
	now_ms: number,
	annotations?: AnnotationSource
): Promise<MorningReport> {
	const settings = await getReportSettings(db, person.id, now_ms);
	const until_ms = span.until_ms ?? now_ms;
	const since_ms = span.since_ms ?? until_ms - 86_400_000;
	if (since_ms >= until_ms) throw new RangeError(`since_ms (${since_ms}) must be before until_ms (${until_ms})`);
	return buildMorningReport(db, {
		setupIds: await followedSetupIds(db, person.id, settings),
		since_ms,
		until_ms,
		timeZone: settings.effectiveTimeZone,
		now_ms,
		person: { id: person.id, name: person.name, email: person.email },
		annotations
	});
}
