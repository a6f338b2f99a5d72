// The lab's time zone: PHASEWARDEN_TIME_ZONE (an IANA name) or UTC. Reports and summaries show
// times in it unless a person chose another.
import { isTimeZone } from '../../reports/schedule';

export function labTimeZone(env: NodeJS.ProcessEnv = process.env): string {
	const tz = env.PHASEWARDEN_TIME_ZONE?.trim();
	if (!tz) return 'UTC';
	if (!isTimeZone(tz))
		throw new RangeError(`PHASEWARDEN_TIME_ZONE: unknown time zone ${JSON.stringify(tz)} (use an IANA name such as Europe/Vienna)`);
	return tz;
}
