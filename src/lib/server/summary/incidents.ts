// Incidents of some runs that touch a span, with who acknowledged and resolved them. An incident
// touches the span when it opened in it, or opened before it and was not resolved before it began.
// Opening times are on the agent's clock where a frame opened the incident (the span's clock).
import { and, eq, inArray } from 'drizzle-orm';
import { alias } from 'drizzle-orm/pg-core';
import type { IncidentFacts } from '../../summary/incidents';
import type { Db } from '../db';
import { incidents, user } from '../db/schema';

const ackUser = alias(user, 'ack_user');
const resolveUser = alias(user, 'resolve_user');

export async function incidentsInSpan(db: Db, runIds: string[], from_ms: number, to_ms: number): Promise<IncidentFacts[]> {
	if (runIds.length === 0) return [];
	const rows = await db
		.select({ i: incidents, ackName: ackUser.name, resolveName: resolveUser.name })
		.from(incidents)
		.leftJoin(ackUser, eq(ackUser.id, incidents.acknowledgedBy))
		.leftJoin(resolveUser, eq(resolveUser.id, incidents.resolvedBy))
		.where(and(inArray(incidents.runId, runIds)));
	const out: IncidentFacts[] = [];
	for (const { i, ackName, resolveName } of rows) {
		const opened_ms = i.openedT ?? i.openedAt.getTime();
		const resolved_ms = i.resolvedAt?.getTime() ?? null;
		const touches = opened_ms < to_ms && (opened_ms >= from_ms || resolved_ms === null || resolved_ms >= from_ms);
		if (!touches) continue;
		out.push({
			id: i.id,
			runId: i.runId,
			kind: i.kind,
			severity: i.severity,
			state: i.state,
			summary: i.summary,
			opened_ms,
			openedAt_ms: i.openedAt.getTime(),
			acknowledgedAt_ms: i.acknowledgedAt?.getTime() ?? null,
			acknowledgedBy: i.acknowledgedBy ? (ackName ?? 'someone since removed') : null,
			resolvedAt_ms: resolved_ms,
			resolvedBy: i.resolvedBy ? (resolveName ?? 'someone since removed') : i.resolvedAt ? 'the detector' : null
		});
	}
	return out.sort((a, b) => a.opened_ms - b.opened_ms);
}
