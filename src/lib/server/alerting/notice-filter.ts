// The two questions the outbox asks before it writes a notice: is the incident silenced (then
// nobody is paged, and the incident's history says by whom and why), and which of each person's
// channels do their preferences allow at this moment.
import { and, eq, sql } from 'drizzle-orm';
import { channelsFor, type PersonalChannel } from '../../alerting/channels-for';
import type { Db, Tx } from '../db';
import { incidentEvents } from '../db/schema';
import { prefsOf } from './preferences';
import { silenceCovering } from './silences';

type Incident = { id: string; setupId: string; runId: string; kind: string };

/** True when no notice may go out for this incident now. An alert that opens silenced is noted in its history. */
export async function noticeSilenced(tx: Tx | Db, incident: Incident, kind: 'alert' | 'clear', step: number, now: Date): Promise<boolean> {
	const silence = await silenceCovering(tx, incident, now);
	if (silence) {
		if (kind === 'alert' && step === 0)
			await tx.insert(incidentEvents).values({
				incidentId: incident.id,
				action: 'note',
				note: `Nobody paged: silenced by ${silence.createdByName ?? 'a former member'} (${silence.reason}) until ${silence.until.toISOString()}.`,
				data: { silenceId: silence.id }
			});
		return true;
	}
	if (kind === 'alert') return false;
	// Nobody heard the alert of an incident that opened silenced, so nobody hears that it cleared.
	const [opened] = await tx
		.select({ id: incidentEvents.id })
		.from(incidentEvents)
		.where(and(eq(incidentEvents.incidentId, incident.id), sql`${incidentEvents.data}->>'silenceId' is not null`))
		.limit(1);
	return Boolean(opened);
}

/** Per person, the channels their preferences allow for this notice at `now`. */
export async function allowedChannels(tx: Tx | Db, userIds: string[], severity: string, kind: 'alert' | 'clear', now: Date) {
	const prefs = await prefsOf(tx, userIds);
	const allowed = new Map<string, PersonalChannel[]>();
	for (const [id, p] of prefs) allowed.set(id, channelsFor(p, severity, kind, now, p.timeZone));
	return (userId: string, channel: PersonalChannel) => allowed.get(userId)?.includes(channel) ?? false;
}
