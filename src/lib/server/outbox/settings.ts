// How long a notification may wait for delivery, read once from the environment. Enqueueing runs
// deep inside detector transactions that know nothing of the runtime, hence a module setting.
const HOUR_MS = 3_600_000;

let expiry_ms: number | undefined;

export function outboxExpiry_ms(env: NodeJS.ProcessEnv = process.env): number {
	if (expiry_ms !== undefined) return expiry_ms;
	const raw = env.PHASEWARDEN_OUTBOX_EXPIRY_H;
	const hours = raw === undefined || raw === '' ? 24 : Number(raw);
	if (!Number.isFinite(hours) || hours <= 0)
		throw new Error(`PHASEWARDEN_OUTBOX_EXPIRY_H must be a positive number of hours, got "${raw}"`);
	expiry_ms = hours * HOUR_MS;
	return expiry_ms;
}
