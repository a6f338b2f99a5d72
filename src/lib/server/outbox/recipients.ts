// Who is told about an incident at a given escalation step: the one place that decides it. The
// on-call rota answers first (the primary at step 0, the secondary at step 1; see
// oncall/on-call-recipients.ts); when the setup has no rota, nobody is on call at that level, or
// the step is 2 or later, every operator and admin of the setup is told (alertRecipients).
// Silences and personal preferences are applied after this, per channel, by the caller
// (outbox/enqueue.ts through alerting/notice-filter.ts). It runs inside the transaction that opens
// or escalates the incident, so whatever it reads is consistent with that commit.
import type { Db, Tx } from '../db';
import type { IncidentRow } from '../incidents/service';
import { onCallRecipients } from '../oncall/on-call-recipients';
import { alertRecipients } from '../setups/service';

export type Recipient = { id: string; name: string; email: string };

/** Step 0 is the first page when the incident opens; the escalation scheduler asks for steps 1, 2, … */
export async function chooseRecipients(
	tx: Tx | Db,
	incident: Pick<IncidentRow, 'setupId' | 'severity'>,
	step: number
): Promise<Recipient[]> {
	const onCall = await rotaFirst(tx, incident.setupId, step);
	if (onCall) return onCall;
	const people = await alertRecipients(tx, incident.setupId);
	return people.map((p) => ({ id: p.id, name: p.name, email: p.email }));
}

/** The on-call rota's say (primary at step 0, secondary at step 1); null leaves it to the operators. */
async function rotaFirst(tx: Tx | Db, setupId: string, step: number): Promise<Recipient[] | null> {
	return onCallRecipients(tx, setupId, step);
}
