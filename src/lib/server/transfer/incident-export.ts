// Incidents as CSV, oldest first, a page at a time (keyset on opened_at, id), with the same
// filters as the incidents list. Evidence is left out: it is nested and the incident page shows it.
import { and, asc, eq, sql, type SQL } from 'drizzle-orm';
import { alias } from 'drizzle-orm/pg-core';
import { z } from 'zod';
import { csvLines } from '../../transfer/frame-csv';
import type { Db } from '../db';
import { incidents, runs, setups, user } from '../db/schema';
import { INCIDENT_STATES } from '../incidents/service';

export const incidentExportQuery = z.object({
	state: z.enum(INCIDENT_STATES, { message: 'state must be open, acknowledged or resolved' }).optional(),
	setup: z.string().min(1).optional(),
	run: z.string().min(1).optional(),
	kind: z.string().min(1).optional()
});
export type IncidentExportQuery = z.infer<typeof incidentExportQuery>;

const PAGE_ROWS = 1000;
const HEADER = [
	'id',
	'setup',
	'run_id',
	'run',
	'kind',
	'key',
	'severity',
	'state',
	'summary',
	'opened_utc',
	'opened_t_ms',
	'opened_seq',
	'acknowledged_utc',
	'acknowledged_by',
	'resolved_utc',
	'resolved_by',
	'condition_active'
];

const iso = (d: Date | null) => (d ? d.toISOString() : null);

export async function* incidentsCsv(db: Db, q: IncidentExportQuery): AsyncGenerator<string> {
	const acker = alias(user, 'acker');
	const resolver = alias(user, 'resolver');
	const filters: SQL[] = [];
	if (q.state) filters.push(eq(incidents.state, q.state));
	if (q.setup) filters.push(eq(incidents.setupId, q.setup));
	if (q.run) filters.push(eq(incidents.runId, q.run));
	if (q.kind) filters.push(eq(incidents.kind, q.kind));
	yield csvLines([HEADER]);
	// The cursor keeps opened_at as Postgres text: a JS Date would drop the microseconds and repeat rows.
	let after: { openedAt: string; id: string } | null = null;
	for (;;) {
		const where = [...filters];
		if (after) where.push(sql`(${incidents.openedAt}, ${incidents.id}) > (${after.openedAt}::timestamptz, ${after.id})`);
		const rows = await db
			.select({
				i: incidents,
				runName: runs.name,
				setupName: setups.name,
				ackedBy: acker.name,
				resolvedBy: resolver.name,
				cursor: sql<string>`${incidents.openedAt}::text`
			})
			.from(incidents)
			.innerJoin(runs, eq(runs.id, incidents.runId))
			.innerJoin(setups, eq(setups.id, incidents.setupId))
			.leftJoin(acker, eq(acker.id, incidents.acknowledgedBy))
			.leftJoin(resolver, eq(resolver.id, incidents.resolvedBy))
			.where(where.length ? and(...where) : undefined)
			.orderBy(asc(incidents.openedAt), asc(incidents.id))
			.limit(PAGE_ROWS);
		if (rows.length === 0) return;
		yield csvLines(
			rows.map(({ i, runName, setupName, ackedBy, resolvedBy }) => [
				i.id,
				setupName,
				i.runId,
				runName,
				i.kind,
				i.key,
				i.severity,
				i.state,
				i.summary,
				iso(i.openedAt),
				i.openedT,
				i.openedSeq,
				iso(i.acknowledgedAt),
				ackedBy,
				iso(i.resolvedAt),
				resolvedBy,
				i.conditionActive ? 'true' : 'false'
			])
		);
		const last = rows[rows.length - 1];
		after = { openedAt: last.cursor, id: last.i.id };
		if (rows.length < PAGE_ROWS) return;
	}
}
