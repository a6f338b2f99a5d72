import type { LayoutServerLoad } from './$types';
import { labTimeZone } from '$lib/server/reports/time-zone';

export const load: LayoutServerLoad = ({ locals }) => ({ user: locals.user, timeZone: labTimeZone() });
