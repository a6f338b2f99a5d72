// Live run page: the run with its incidents and gaps, and its latest frames; incident actions.
import { error } from '@sveltejs/kit';
import { activeSilences } from '$lib/server/alerting/silences';
import { requireRole } from '$lib/server/http/guard';
import { runDetail } from '$lib/server/runs/detail';
import { listFrames } from '$lib/server/runs/service';
import { getRuntime } from '$lib/server/runtime';
import type { Gap, Incident, Occupancy, Run } from '$lib/ui/types';
import { incidentActions } from '../../incidents/incident-actions.server';
import { phaseSpaceFor } from './phase-space.server';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	event.depends('pw:run');
	requireRole(event, 'observer');
	const { params, url } = event;
	const { db, ingest } = await getRuntime();
	const [detail, frames, phaseSpace, silences] = await Promise.all([
		runDetail(db, ingest, params.id),
		listFrames(db, params.id, {}),
		phaseSpaceFor(params.id, url),
		activeSilences(db, params.id)
	]);
	if (!detail) error(404, 'no run with this id');
	// Typed as the JSON API's shapes: the page refreshes them from GET /api/runs/:id.
	const run: Run = detail.run;
	const incidents: Incident[] = detail.incidents;
	const gaps: Gap[] = detail.gaps;
	const occupancy: Occupancy | null = detail.occupancy;
	return { ...detail, run, incidents, gaps, occupancy, frames, ...phaseSpace, silences };
};

export const actions: Actions = incidentActions;
