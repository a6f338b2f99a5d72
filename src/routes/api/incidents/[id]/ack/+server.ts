import { actOnIncident } from '$lib/server/incidents/act';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = (event) => actOnIncident(event, 'ack');
