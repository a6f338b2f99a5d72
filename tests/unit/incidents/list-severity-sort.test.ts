// The incident list sorted by severity goes by urgency (critical > warning > info, the order the
// product defines in incidents/severity.ts), not by the words' alphabetical order.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openDatabase, type Db } from '../../../src/lib/server/db';
import { runs } from '../../../src/lib/server/db/schema';
import { incidentQuerySchema, listIncidents, openIncident } from '../../../src/lib/server/incidents/service';
import { createSetup } from '../../../src/lib/server/setups/service';

let db: Db;
let close: () => Promise<void>;

beforeAll(async () => {
	({ db, close } = await openDatabase('memory://', 'drizzle'));
	const setup = await createSetup(db, { name: 'sort fridge', description: '', order: 3, states: 6, mode_GHz: 5, nominal_mK: 12 }, null);
	const t0 = 1_796_000_000_000;
	// One run each, far apart in time, so no incident groups under another.
	const severities = ['warning', 'critical', 'info'] as const;
	for (const [i, severity] of severities.entries()) {
		const [run] = await db
			.insert(runs)
			.values({ id: `r${i}`, setupId: setup.id, key: `r${i}`, name: `r${i}`, order: 3, states: 6, modeGHz: 5 })
			.returning();
		await db.transaction((tx) =>
			openIncident(tx, run, { kind: 'aux_limit', severity, summary: severity, evidence: {}, t: t0 + i * 3_600_000 })
		);
	}
}, 60_000);
afterAll(async () => {
	await close();
});

describe('listIncidents sorted by severity', () => {
	it('descending gives critical, warning, info; ascending the reverse', async () => {
		const order = async (dir: 'asc' | 'desc') =>
			(await listIncidents(db, incidentQuerySchema.parse({ sort: 'severity', order: dir }))).incidents.map((i) => i.severity);
		expect(await order('desc')).toEqual(['critical', 'warning', 'info']);
		expect(await order('asc')).toEqual(['info', 'warning', 'critical']);
	});
});
