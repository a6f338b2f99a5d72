// Live run page: the run with its incidents and gaps, and its latest frames; incident actions.
import type { DetectorStatus } from '$lib/detect/status';
import { apiGet } from '$lib/ui/api';
import type { Frame, Gap, Incident, Occupancy, Run } from '$lib/ui/types';
import { incidentActions } from '../../incidents/incident-actions.server';
import type { Actions, PageServerLoad } from './$types';

interface RunDetail {
	run: Run;
	setup: { id: string; name: string; [k: string]: unknown };
	incidents: Incident[];
	gaps: Gap[];
	occupancy: Occupancy | null;
	detectors: DetectorStatus[] | null;
}

export const load: PageServerLoad = async ({ fetch, params, depends }) => {
	depends('pw:run');
	const id = encodeURIComponent(params.id);
	const [detail, frames] = await Promise.all([
		apiGet<RunDetail>(fetch, `/api/runs/${id}`),
		apiGet<{ frames: Frame[]; lastSeq: number }>(fetch, `/api/runs/${id}/frames`)
	]);
	return { ...detail, frames: frames.frames };
};

export const actions: Actions = incidentActions;
