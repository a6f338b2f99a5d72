// A datetime-local form value ("2026-12-01T08:00") read as wall-clock time in a time zone.
import { zonedInstant } from '../../reports/schedule';

export function zonedLocalToMs(value: string, timeZone: string): number {
	const m = /^(\d{4})-(\d{2})-(\d{2})T(\d{2}):(\d{2})$/.exec(value);
	if (!m) throw new RangeError(`expected a date and time such as 2026-12-01T08:00, got ${JSON.stringify(value)}`);
	return zonedInstant(+m[1], +m[2], +m[3], +m[4], +m[5], timeZone);
}
