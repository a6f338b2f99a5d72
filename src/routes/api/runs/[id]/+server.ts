import { error } from '@sveltejs/kit';
import { json, requireRole } from '$lib/server/http/guard';
import { listIncidents } from '$lib/server/incidents/service';
import { getRuntime } from '$lib/server/runtime';
import { runDetectorStatus } from '$lib/server/runs/detector-status';
import { getRun, listGaps, publicRun, recentOccupancy } from '$lib/server/runs/service';
import { getSetup } from '$lib/server/setups/service';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	requireRole(event, 'observer');
	const { db, ingest } = await getRuntime();
	const run = await getRun(db, event.params.id);
	if (!run) error(404, 'no run with this id');
	const [setup, incidents, gaps, occupancy, detectors] = await Promise.all([
		getSetup(db, run.setupId),
		listIncidents(db, { run: run.id, sort: 'openedAt', order: 'desc', page: 1, pageSize: 200 }),
		listGaps(db, run.id),
		recentOccupancy(db, run.id, run.states),
		runDetectorStatus(db, ingest, run)
	]);
	return json({ run: publicRun(run), setup, incidents: incidents.incidents, gaps, occupancy, detectors });
};
