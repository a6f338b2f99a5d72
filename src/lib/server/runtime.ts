// The server's long-lived parts, started once per process and shared by pages, API routes and the
// agent socket (through globalThis, so dev's module reloading and the production bundle see one).
// On a PostgreSQL server several such processes may share the database (cluster/): live events
// reach them all, each run has one writer among them, and background work runs on the leader.
import { getRequestEvent } from '$app/server';
import { sveltekitCookies } from 'better-auth/svelte-kit';
import { createAuth, type Auth } from './auth/options';
import { configureAckLinks } from './alerting/ack-links';
import { loadAuthSecret } from './auth/secret';
import { singleInstance, type Cluster } from './cluster/cluster';
import { readConfig, type Config } from './config';
import { lockDataDir, unlockDataDir } from './data-lock';
import { openConfiguredDatabase, type Db } from './db';
import { Ingest } from './ingest/ingest';
import { DEFAULT_SNAPSHOT_POLICY } from './ingest/run-writer';
import { LiveBus, type LiveEvent } from './live/bus';
import { scheduleMaintenance } from './maintenance/schedule';
import type { startMailCatcher } from './notify/catcher';
import type { Mailer } from './notify/mailer';
import { reportNow } from './reports/clock';
import { startReportScheduler } from './reports/scheduler';
import { startDelivery, type Delivery } from './outbox/start';
import { startEscalation, type Escalation } from './oncall/scheduler';
import { RESET_TTL_S, resetPasswordSender } from './people/reset-mail';

export interface Runtime {
	config: Config;
	db: Db;
	auth: Auth;
	bus: LiveBus;
	ingest: Ingest;
	catcher: Awaited<ReturnType<typeof startMailCatcher>> | null;
	/** The morning-report scheduler (its checks stop with PHASEWARDEN_REPORTS=0; `tick` still works). */
	reports: ReturnType<typeof startReportScheduler>;
	/** The outbox's delivery worker, the VAPID keys and the local push and SMS fakes. */
	delivery: Delivery;
	/** Pages the next step of unacknowledged incidents when their timers fall due. */
	escalation: Escalation;
	mailer: Mailer | null;
	/** The other instances on the same database (alone with the embedded one). */
	cluster: Cluster;
	close(): Promise<void>;
}

const KEY = Symbol.for('phasewarden.runtime');
type Global = typeof globalThis & { [KEY]?: Promise<Runtime> };

export function getRuntime(): Promise<Runtime> {
	const g = globalThis as Global;
	g[KEY] ??= start();
	return g[KEY];
}

async function start(): Promise<Runtime> {
	const config = readConfig();
	// The folder lock keeps a second process off the embedded database; on a server, instances may
	// share a folder (it then holds only generated keys).
	const embedded = !config.databaseUrl;
	if (embedded) lockDataDir(config.dataDir);
	else requireSharedSecrets(config);
	const { db, kind: databaseKind, close: closeDb } = await openConfiguredDatabase(config);
	const cluster = config.databaseUrl ? await (await import('./cluster/pg-cluster')).startPgCluster(config.databaseUrl) : singleInstance();
	const authSecret = loadAuthSecret(config.dataDir, config.authSecret);
	configureAckLinks(authSecret);
	const auth = createAuth({
		db,
		secret: authSecret,
		baseURL: config.origin,
		extraPlugins: [sveltekitCookies(getRequestEvent)],
		// Read when a reset is asked for, by which time the mailer below exists.
		sendResetPassword: (data) => resetPasswordSender(mailer, () => config.origin ?? 'http://localhost:5173')(data),
		resetPasswordTtl_s: RESET_TTL_S
	});
	// The catcher (smtp-server, mailparser) and the mailer (nodemailer) are loaded only when used: a
	// server without mail keeps their code out of memory (tests/bench/memory).
	const catcher = config.catcher ? await (await import('./notify/catcher')).startMailCatcher({ port: config.catcherPort }) : null;
	const smtpUrl = config.smtpUrl ?? (catcher ? `smtp://127.0.0.1:${catcher.port}` : undefined);
	const mailer = smtpUrl ? (await import('./notify/mailer')).createMailer({ smtpUrl, from: config.mailFrom }) : null;
	if (catcher) console.log(`mail catcher listening on 127.0.0.1:${catcher.port}`);
	const bus = new LiveBus();
	if (cluster.shared) {
		bus.relayTo((event) => cluster.send('live', event));
		cluster.onMessage((kind, body) => {
			if (kind === 'live') bus.deliverFromElsewhere(body as LiveEvent);
		});
	}
	// Notices are queued in the outbox by the transactions that open and resolve incidents; the
	// worker wakes on the bus's incident events, so these hooks have nothing left to do.
	const delivery = await startDelivery({ db, config, mailer, bus, cluster });
	const isLeader = () => cluster.isLeader();
	const escalation = startEscalation({ db, every_ms: config.escalationPollMs, onPaged: () => void delivery.worker.wake(), isLeader });
	const ingest = new Ingest(
		db,
		bus,
		{ incidentOpened: () => {}, incidentResolved: () => {} },
		config.silenceCheckMs,
		{ ...DEFAULT_SNAPSHOT_POLICY, everyMs: config.snapshotEveryMs },
		cluster
	);
	const stopMaintenance = scheduleMaintenance(db, config.maintenanceEveryMs, databaseKind, console.log, isLeader);
	const reports = startReportScheduler(
		{ db, mailer, origin: () => config.origin ?? 'http://localhost:5173', now: reportNow },
		undefined,
		isLeader
	);
	if (process.env.PHASEWARDEN_REPORTS === '0') reports.stop();
	return {
		config,
		db,
		auth,
		bus,
		ingest,
		catcher,
		reports,
		delivery,
		escalation,
		mailer,
		cluster,
		async close() {
			await escalation.stop();
			stopMaintenance();
			reports.stop();
			ingest.close();
			await ingest.flush();
			await delivery.close();
			// Ends the leases only once everything this instance wrote is committed.
			await cluster.close();
			mailer?.close();
			await catcher?.close();
			await closeDb();
			if (embedded) unlockDataDir(config.dataDir);
		}
	};
}

/**
 * Instances behind one address must sign sessions and push messages alike: a session made on one
 * is checked on another, and a device subscribed through one is sent to by whichever delivers.
 */
function requireSharedSecrets(config: Config) {
	if (!config.authSecret) {
		throw new Error(
			'BETTER_AUTH_SECRET: required with DATABASE_URL, and the same for every instance (a generated one would differ per data folder)'
		);
	}
	if (!process.env.PHASEWARDEN_VAPID_PUBLIC || !process.env.PHASEWARDEN_VAPID_PRIVATE) {
		console.warn(
			'push: PHASEWARDEN_VAPID_PUBLIC/PRIVATE are not set, so this instance uses the keys in its data folder; ' +
				'with more than one instance set both to the same pair everywhere (copy them from one vapid.json)'
		);
	}
}
