// Live updates by server-sent events: one EventSource per page, named events parsed as JSON,
// and a connection state the page shows (so a stalled feed is never mistaken for a quiet run).

export type LiveStatus = 'connecting' | 'live' | 'retrying' | 'closed';

// Each handler declares the shape of its own event (the server's JSON is taken at its word); a `never`
// parameter accepts handlers of any shape.
type Handlers = Record<string, (data: never) => void>;

export class LiveFeed {
	status = $state<LiveStatus>('connecting');
	/** Browser time of the last message of any kind (for "updated 3 s ago"). */
	lastMessageAt = $state<number | null>(null);

	#source: EventSource | null = null;
	#retryTimer: ReturnType<typeof setTimeout> | null = null;
	#attempt = 0;
	#closed = false;

	constructor(
		private url: string,
		private handlers: Handlers,
		/** Called each time the stream opens, the first time too: whatever changed before it was
		 * listening (between the page's load and now, or while the link was down) is fetched afresh. */
		private onOpen?: () => void
	) {
		this.#open();
	}

	#open() {
		if (this.#closed) return;
		this.status = this.#attempt === 0 ? 'connecting' : 'retrying';
		const source = new EventSource(this.url, { withCredentials: true });
		this.#source = source;
		source.onopen = () => {
			this.#attempt = 0;
			this.status = 'live';
			this.onOpen?.();
		};
		source.onerror = () => {
			if (this.#closed) return;
			// The browser retries on its own while the source is CONNECTING; once it gives up
			// (CLOSED, e.g. a 401 or a server restart) we retry with a capped backoff.
			if (source.readyState === EventSource.CLOSED) {
				source.close();
				this.#attempt += 1;
				this.status = 'retrying';
				const delay_ms = Math.min(30_000, 1000 * 2 ** Math.min(this.#attempt, 5));
				this.#retryTimer = setTimeout(() => this.#open(), delay_ms);
			} else {
				this.#attempt = Math.max(this.#attempt, 1);
				this.status = 'retrying';
			}
		};
		for (const [name, handle] of Object.entries(this.handlers)) {
			source.addEventListener(name, (ev) => {
				this.lastMessageAt = Date.now();
				let data: unknown;
				try {
					data = JSON.parse((ev as MessageEvent<string>).data);
				} catch {
					console.warn(`live feed: event "${name}" carried invalid JSON`);
					return;
				}
				handle(data as never);
			});
		}
	}

	close() {
		this.#closed = true;
		this.status = 'closed';
		if (this.#retryTimer) clearTimeout(this.#retryTimer);
		this.#source?.close();
		this.#source = null;
	}
}

/** A clock that ticks once a second, for ages ("last frame 12 s ago") that must keep counting. */
export class Ticker {
	now = $state(Date.now());
	#timer: ReturnType<typeof setInterval> | null = null;
	start(period_ms = 1000) {
		this.stop();
		this.#timer = setInterval(() => (this.now = Date.now()), period_ms);
		return () => this.stop();
	}
	stop() {
		if (this.#timer) clearInterval(this.#timer);
		this.#timer = null;
	}
}
