// Group commit: the batches of every run that are ready at the same moment are written in ONE
// transaction, so they share one fsync instead of paying one each. With many live runs that is
// what keeps acks fast: the disk flush, not the SQL, is the cost of a durable commit.
//
// A unit's work must touch only the database (no in-memory state), because when a group fails,
// each of its units is retried alone, so that one bad batch cannot keep the others from landing.
import type { Db, Tx } from '../db';

interface Unit<T> {
	work: (tx: Tx | Db) => Promise<T>;
	/** The work is one SQL statement, atomic by itself: alone, it needs no transaction around it. */
	singleStatement: boolean;
	resolve: (value: T) => void;
	reject: (err: unknown) => void;
}

/** Units per transaction: bounds how long one group holds the database. */
const MAX_UNITS = 64;

export class GroupCommitter {
	#queue: Unit<unknown>[] = [];
	#busy = false;

	constructor(private db: Db) {}

	run<T>(work: (tx: Tx | Db) => Promise<T>, options: { singleStatement: boolean }): Promise<T> {
		return new Promise<T>((resolve, reject) => {
			this.#queue.push({ work, singleStatement: options.singleStatement, resolve, reject } as Unit<unknown>);
			if (this.#busy) return;
			this.#busy = true;
			// Let every writer that is ready in this turn of the event loop join the group.
			setImmediate(() => void this.#flush());
		});
	}

	async #flush() {
		try {
			while (this.#queue.length > 0) {
				const units = this.#queue.splice(0, MAX_UNITS);
				if (units.length === 1) {
					await this.#alone(units[0]);
					continue;
				}
				let values: unknown[];
				try {
					values = await this.db.transaction(async (tx) => {
						const out: unknown[] = [];
						for (const u of units) out.push(await u.work(tx));
						return out;
					});
				} catch {
					for (const u of units) await this.#alone(u);
					continue;
				}
				units.forEach((u, i) => u.resolve(values[i]));
			}
		} finally {
			this.#busy = false;
		}
	}

	async #alone(u: Unit<unknown>) {
		try {
			u.resolve(u.singleStatement ? await u.work(this.db) : await this.db.transaction((tx) => u.work(tx)));
		} catch (err) {
			u.reject(err);
		}
	}
}
