// Live run page: the run with its incidents and gaps, and its latest frames; incident actions.
import type { DetectorStatus } from '$lib/detect/status';
import { activeSilences } from '$lib/server/alerting/silences';
import { getRuntime } from '$lib/server/runtime';
import { apiGet } from '$lib/ui/api';
import type { Frame, Gap, Incident, Occupancy, Run } from '$lib/ui/types';
import { incidentActions } from '../../incidents/incident-actions.server';
import { phaseSpaceFor } from './phase-space.server';
import type { Actions, PageServerLoad } from './$types';

interface RunDetail {
	run: Run;
	setup: { id: string; name: string; [k: string]: unknown };
	incidents: Incident[];
	gaps: Gap[];
	occupancy: Occupancy | null;
	detectors: DetectorStatus[] | null;
}

export const load: PageServerLoad = async ({ fetch, params, depends, url }) => {
	depends('pw:run');
	const id = encodeURIComponent(params.id);
	const [detail, frames, phaseSpace, silences] = await Promise.all([
		apiGet<RunDetail>(fetch, `/api/runs/${id}`),
		apiGet<{ frames: Frame[]; lastSeq: number }>(fetch, `/api/runs/${id}/frames`),
		phaseSpaceFor(params.id, url),
		getRuntime().then(({ db }) => activeSilences(db, params.id))
	]);
	return { ...detail, frames: frames.frames, ...phaseSpace, silences };
};

export const actions: Actions = incidentActions;
