// One run as its pages and GET /api/runs/:id show it: the run with its setup, incidents, gaps,
// recent occupancy and what each detector can see. Null when there is no such run.
import type { Db } from '../db';
import { listIncidents } from '../incidents/service';
import { getSetup } from '../setups/service';
import { runDetectorStatus } from './detector-status';
import { getRun, listGaps, publicRun, recentOccupancy } from './service';

export async function runDetail(db: Db, ingest: Parameters<typeof runDetectorStatus>[1], id: string) {
	const run = await getRun(db, id);
	if (!run) return null;
	const [setup, incidents, gaps, occupancy, detectors] = await Promise.all([
		getSetup(db, run.setupId),
		listIncidents(db, { run: run.id, sort: 'openedAt', order: 'desc', page: 1, pageSize: 200 }),
		listGaps(db, run.id),
		recentOccupancy(db, run.id, run.states),
		runDetectorStatus(db, ingest, run)
	]);
	return { run: publicRun(run), setup, incidents: incidents.incidents, gaps, occupancy, detectors };
}
