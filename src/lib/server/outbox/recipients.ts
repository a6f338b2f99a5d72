// Who is told about an incident at a given step. Today every step answers the same: the operators
// and admins of the setup (see alertRecipients). This is the one place an on-call rota, an
// escalation policy, silences and personal preferences will decide instead; it runs inside the
// transaction that opens the incident, so whatever it reads is consistent with that commit.
import type { Db, Tx } from '../db';
import type { IncidentRow } from '../incidents/service';
import { onCallRecipients } from '../oncall/on-call-recipients';
import { alertRecipients } from '../setups/service';

export type Recipient = { id: string; name: string; email: string };

/** Step 0 is the first page when the incident opens; escalation will ask for steps 1, 2, … */
export async function chooseRecipients(tx: Tx | Db, incident: Pick<IncidentRow, 'setupId' | 'severity'>, step: number): Promise<Recipient[]> {
	const onCall = await rotaFirst(tx, incident.setupId, step);
	if (onCall) return onCall;
	const people = await alertRecipients(tx, incident.setupId);
	return people.map((p) => ({ id: p.id, name: p.name, email: p.email }));
}

/** The on-call rota's say (primary at step 0, secondary at step 1); null leaves it to the operators. */
async function rotaFirst(tx: Tx | Db, setupId: string, step: number): Promise<Recipient[] | null> {
	return onCallRecipients(tx, setupId, step);
}
