// Settings from the environment, read once. Every variable is listed in the README.
import path from 'node:path';

export interface Config {
	dataDir: string;
	/** A PostgreSQL server (DATABASE_URL); unset: the embedded database in dataDir. */
	databaseUrl: string | undefined;
	origin: string | undefined;
	authSecret: string | undefined;
	smtpUrl: string | undefined;
	mailFrom: string;
	catcher: boolean;
	catcherPort: number;
	migrationsDir: string;
	silenceCheckMs: number;
	/** How often a live run's detector state is saved (a restart replays the frames since). */
	snapshotEveryMs: number;
	/** How often VACUUM, CHECKPOINT and raw-frame retention run. */
	maintenanceEveryMs: number;
	/** How often the delivery worker looks for retries that came due (new notifications wake it at once). */
	outboxPollMs: number;
	/** The wait after a first failed delivery; it doubles with each failure up to ten minutes. */
	outboxRetryBaseMs: number;
	/** How often due escalation steps are looked for. */
	escalationPollMs: number;
	/** How long an invitation link works. */
	inviteTtl_s: number;
	/** Reverse proxies whose X-Forwarded-For is believed (PHASEWARDEN_TRUSTED_PROXY); none by default. */
	trustedProxies: string[];
	/** Send Strict-Transport-Security even when ORIGIN is not https (PHASEWARDEN_HSTS=1). */
	hsts: boolean;
}

export function readConfig(env: NodeJS.ProcessEnv = process.env): Config {
	return {
		dataDir: path.resolve(env.PHASEWARDEN_DATA || '.data'),
		databaseUrl: databaseUrl(env.DATABASE_URL),
		origin: env.ORIGIN || undefined,
		authSecret: env.BETTER_AUTH_SECRET || undefined,
		smtpUrl: env.SMTP_URL || undefined,
		mailFrom: env.MAIL_FROM || 'Phasewarden <phasewarden@localhost>',
		catcher: env.PHASEWARDEN_CATCHER === '1',
		catcherPort: Number(env.PHASEWARDEN_CATCHER_PORT ?? 2525),
		migrationsDir: path.resolve(env.PHASEWARDEN_MIGRATIONS || 'drizzle'),
		silenceCheckMs: Number(env.PHASEWARDEN_SILENCE_CHECK_MS ?? 5000),
		snapshotEveryMs: positiveSeconds(env, 'PHASEWARDEN_SNAPSHOT_S', 30) * 1000,
		maintenanceEveryMs: positiveSeconds(env, 'PHASEWARDEN_MAINTENANCE_S', 300) * 1000,
		outboxPollMs: positiveSeconds(env, 'PHASEWARDEN_OUTBOX_POLL_S', 5) * 1000,
		outboxRetryBaseMs: positiveSeconds(env, 'PHASEWARDEN_OUTBOX_RETRY_S', 5) * 1000,
		escalationPollMs: positiveSeconds(env, 'PHASEWARDEN_ESCALATION_POLL_S', 15) * 1000,
		inviteTtl_s: positiveSeconds(env, 'PHASEWARDEN_INVITE_TTL_S', 7 * 24 * 3600),
		trustedProxies: (env.PHASEWARDEN_TRUSTED_PROXY ?? '')
			.split(',')
			.map((a) => a.trim())
			.filter(Boolean),
		hsts: env.PHASEWARDEN_HSTS === '1' || (env.ORIGIN ?? '').startsWith('https:')
	};
}

function positiveSeconds(env: NodeJS.ProcessEnv, name: string, fallback: number): number {
	const raw = env[name];
	if (raw === undefined || raw === '') return fallback;
	const value = Number(raw);
	if (!Number.isFinite(value) || value <= 0) throw new Error(`${name} must be a positive number of seconds, got "${raw}"`);
	return value;
}

function databaseUrl(raw: string | undefined): string | undefined {
	if (!raw) return undefined;
	if (!/^postgres(ql)?:\/\//.test(raw))
		throw new Error(`DATABASE_URL must start with postgres:// or postgresql://, got "${raw.slice(0, 40)}"`);
	return raw;
}
