// Settings from the environment, read once. Every variable is listed in the README.
import path from 'node:path';

export interface Config {
	dataDir: string;
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
	/** Reverse proxies whose X-Forwarded-For is believed (PHASEWARDEN_TRUSTED_PROXY); none by default. */
	trustedProxies: string[];
	/** Send Strict-Transport-Security even when ORIGIN is not https (PHASEWARDEN_HSTS=1). */
	hsts: boolean;
}

export function readConfig(env: NodeJS.ProcessEnv = process.env): Config {
	return {
		dataDir: path.resolve(env.PHASEWARDEN_DATA || '.data'),
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
