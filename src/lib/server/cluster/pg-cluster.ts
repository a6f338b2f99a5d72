// Several app instances on one PostgreSQL server, coordinated through one dedicated connection per
// instance:
// - run leases and leadership are session advisory locks on that connection. They need no table,
//   no expiry to tune and no heartbeat: PostgreSQL drops them the moment the instance's session
//   ends (process killed, host gone once TCP keepalive notices), and nothing can hold one for a
//   dead process. A lease row with an expiry would instead have to be renewed, and a stalled
//   instance could write after its lease ran out. Frames carry a (run, seq) key, so even a writer
//   that lost its lease without hearing it cannot store a frame twice.
// - live events and control messages travel by LISTEN/NOTIFY on the same connection, in parts
//   under NOTIFY's 8000-byte limit (notify-chunks.ts), tagged with the sender so it skips its own.
// If the connection drops, every lease is gone with it: the instance is told (onLeasesLost) to
// stop writing, and reconnects.
import { randomUUID } from 'node:crypto';
import pg from 'pg';
import type { Cluster, ControlMessage } from './cluster';
import { PartAssembler, splitMessage } from './notify-chunks';

const CHANNEL = 'phasewarden_cluster';
/** Each instance's dedicated connection says who it is, so instances can see each other (`alone`). */
const APPLICATION_NAME = 'phasewarden instance';
/** First key of the two-key advisory locks: one space for run leases, one for the leader. */
const RUN_LOCKS = 0x5057_0001;
const LEADER_LOCK = 0x5057_0002;

export interface PgClusterOptions {
	/** How often a follower tries to become the leader. */
	leaderRetry_ms?: number;
	/** Wait before reconnecting after the connection dropped. */
	reconnect_ms?: number;
	log?: (message: string) => void;
}

export async function startPgCluster(url: string, options: PgClusterOptions = {}): Promise<Cluster> {
	const leaderRetry_ms = options.leaderRetry_ms ?? 3000;
	const reconnect_ms = options.reconnect_ms ?? 1000;
	const log = options.log ?? ((m: string) => console.log(m));
	const instanceId = randomUUID();
	const held = new Set<string>();
	const assembler = new PartAssembler();
	const messageHandlers: ((kind: 'live' | 'control', body: unknown) => void)[] = [];
	const lostHandlers: (() => void)[] = [];
	let client: pg.Client | null = null;
	let leader = false;
	let closed = false;
	let nextMessageId = 1;
	let leaderTimer: NodeJS.Timeout | null = null;

	const dropped = (c: pg.Client, why: string) => {
		if (client !== c) return;
		client = null;
		c.removeAllListeners('notification');
		c.end().catch(() => {});
		assembler.clear();
		const hadLeases = held.size > 0 || leader;
		held.clear();
		if (leader) log('cluster: no longer the leader (database link lost)');
		leader = false;
		if (hadLeases) for (const h of lostHandlers) h();
		if (closed) return;
		log(`cluster: database link lost (${why}); reconnecting`);
		setTimeout(() => void connect().catch(() => {}), reconnect_ms).unref();
	};

	const connect = async (retryOnFailure = true) => {
		const c = new pg.Client({ connectionString: url, keepAlive: true, application_name: `${APPLICATION_NAME} ${instanceId.slice(0, 8)}` });
		c.on('error', (err) => dropped(c, err.message));
		c.on('end', () => dropped(c, 'connection ended'));
		try {
			await c.connect();
			await c.query(`LISTEN ${CHANNEL}`);
		} catch (err) {
			c.end().catch(() => {});
			if (!closed && retryOnFailure) setTimeout(() => void connect().catch(() => {}), reconnect_ms).unref();
			throw err;
		}
		c.on('notification', (n) => {
			if (n.channel !== CHANNEL || !n.payload) return;
			let whole;
			try {
				whole = assembler.add(n.payload);
			} catch (err) {
				return log((err as Error).message);
			}
			if (!whole || whole.from === instanceId) return;
			try {
				const { k, b } = JSON.parse(whole.text) as { k: 'live' | 'control'; b: unknown };
				for (const h of messageHandlers) h(k, b);
			} catch (err) {
				log(`cluster: a message could not be read: ${(err as Error).message}`);
			}
		});
		client = c;
		await tryLead();
	};

	const tryLead = async () => {
		const c = client;
		if (!c || leader || closed) return;
		try {
			const { rows } = await c.query<{ ok: boolean }>('SELECT pg_try_advisory_lock($1::int, 0) AS ok', [LEADER_LOCK]);
			if (rows[0].ok && client === c) {
				leader = true;
				log(`cluster: instance ${instanceId.slice(0, 8)} is the leader (escalation, reports, maintenance run here)`);
			}
		} catch {
			/* the link is down; `dropped` takes it from here */
		}
	};

	// At start a failure is the caller's to report; later ones are retried.
	await connect(false);
	leaderTimer = setInterval(() => void tryLead(), leaderRetry_ms);
	leaderTimer.unref();

	function send(kind: 'live' | 'control', body: unknown) {
		const c = client;
		if (!c) return;
		const parts = splitMessage(instanceId, nextMessageId++, JSON.stringify({ k: kind, b: body }));
		// pg.Client runs its queries one after another, so the parts go out in order.
		for (const part of parts) c.query('SELECT pg_notify($1, $2)', [CHANNEL, part]).catch(() => {});
	}

	return {
		instanceId,
		shared: true,
		async tryLeaseRun(runId: string) {
			if (held.has(runId)) return true;
			const c = client;
			if (!c) return false;
			const { rows } = await c.query<{ ok: boolean }>('SELECT pg_try_advisory_lock($1::int, hashtext($2)) AS ok', [RUN_LOCKS, runId]);
			if (!rows[0].ok || client !== c) return false;
			held.add(runId);
			return true;
		},
		async releaseRun(runId: string) {
			const c = client;
			if (!held.delete(runId) || !c) return;
			await c.query('SELECT pg_advisory_unlock($1::int, hashtext($2))', [RUN_LOCKS, runId]).catch(() => {});
		},
		isLeader: () => leader,
		async alone() {
			const c = client;
			if (!c) return false;
			const { rows } = await c.query<{ n: number }>(
				'SELECT count(*)::int AS n FROM pg_stat_activity WHERE datname = current_database() AND pid <> pg_backend_pid() AND application_name LIKE $1',
				[`${APPLICATION_NAME} %`]
			);
			return rows[0].n === 0;
		},
		send: send as Cluster['send'],
		onMessage: (h) => void messageHandlers.push(h),
		onLeasesLost: (h) => void lostHandlers.push(h),
		async close() {
			closed = true;
			if (leaderTimer) clearInterval(leaderTimer);
			const c = client;
			client = null;
			held.clear();
			leader = false;
			// Ending the session releases every advisory lock at once.
			await c?.end().catch(() => {});
		}
	};
}

export type { ControlMessage };
