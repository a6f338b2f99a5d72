// What app instances sharing one database agree on: who writes each run, who runs background work
// (escalation, reports, maintenance), and the messages they pass (live events for open pages,
// requests to hand a run over, changes to rules). The embedded database has one process, so it is
// alone: always the leader, every run its own, nobody to tell (`singleInstance`). A PostgreSQL
// server may have several (`pg-cluster.ts`).

/** Messages between instances, apart from live events. */
export type ControlMessage =
	| { type: 'release-run'; runId: string }
	| { type: 'rules-changed'; setupId: string }
	| { type: 'run-facts-changed'; setupId: string }
	| { type: 'token-revoked'; tokenId: string };

export interface Cluster {
	readonly instanceId: string;
	readonly shared: boolean;
	/** Becomes the only writer of a run across instances; false while another instance holds it. */
	tryLeaseRun(runId: string): Promise<boolean>;
	releaseRun(runId: string): Promise<void>;
	/** Whether this instance runs the background work now. */
	isLeader(): boolean;
	/** Whether no other instance is connected to the database right now. */
	alone(): Promise<boolean>;
	/** Sends to every other instance (never back to this one). */
	send(kind: 'live', body: unknown): void;
	send(kind: 'control', body: ControlMessage): void;
	onMessage(handler: (kind: 'live' | 'control', body: unknown) => void): void;
	/** Called when this instance lost its leases (its database link dropped): it must stop writing. */
	onLeasesLost(handler: () => void): void;
	close(): Promise<void>;
}

export function singleInstance(): Cluster {
	return {
		instanceId: 'single',
		shared: false,
		tryLeaseRun: async () => true,
		releaseRun: async () => {},
		isLeader: () => true,
		alone: async () => true,
		send: () => {},
		onMessage: () => {},
		onLeasesLost: () => {},
		close: async () => {}
	};
}
