// Promises that resolve when a condition on the connection's state holds (welcomed, drained, below
// a count): checked again after every change, all rejected at once when the agent stops or fails.

interface Waiter {
	check: () => boolean;
	resolve: () => void;
	reject: (err: Error) => void;
}

export class Waiters {
	private list: Waiter[] = [];

	/** Resolves once `check()` holds: at once if it already does, else at a later settle(). */
	wait(check: () => boolean): Promise<void> {
		if (check()) return Promise.resolve();
		return new Promise((resolve, reject) => this.list.push({ check, resolve, reject }));
	}

	/** Resolves every waiter whose condition now holds. */
	settle(): void {
		this.list = this.list.filter((w) => {
			if (!w.check()) return true;
			w.resolve();
			return false;
		});
	}

	rejectAll(err: Error): void {
		const list = this.list;
		this.list = [];
		for (const w of list) w.reject(err);
	}
}
