// The incidents list's URL query: parsed leniently (a bad value falls back to its default) so shared links never break.
export const STATES = ['open', 'acknowledged', 'resolved'] as const;
export const SORTS = ['openedAt', 'severity', 'kind', 'state'] as const;
export const PAGE_SIZES = [10, 25, 50, 100] as const;

export interface IncidentQuery {
	state: (typeof STATES)[number] | '';
	setup: string;
	sort: (typeof SORTS)[number];
	order: 'asc' | 'desc';
	page: number;
	pageSize: number;
}

const pick = <T extends string, F extends string>(v: string | null, allowed: readonly T[], fallback: F): T | F =>
	v !== null && (allowed as readonly string[]).includes(v) ? (v as T) : fallback;

export function parseQuery(params: URLSearchParams): IncidentQuery {
	const page = Number.parseInt(params.get('page') ?? '', 10);
	const size = Number.parseInt(params.get('pageSize') ?? '', 10);
	return {
		state: pick(params.get('state'), STATES, ''),
		setup: params.get('setup') ?? '',
		sort: pick(params.get('sort'), SORTS, 'openedAt'),
		order: pick(params.get('order'), ['asc', 'desc'] as const, 'desc'),
		page: Number.isFinite(page) && page >= 1 ? page : 1,
		pageSize: (PAGE_SIZES as readonly number[]).includes(size) ? size : 25
	};
}

/** The query as a URL search string, leaving out defaults so links stay short. */
export function toSearch(q: IncidentQuery, change: Partial<IncidentQuery> = {}): string {
	const m = { ...q, ...change };
	const p = new URLSearchParams();
	if (m.state) p.set('state', m.state);
	if (m.setup) p.set('setup', m.setup);
	if (m.sort !== 'openedAt') p.set('sort', m.sort);
	if (m.order !== 'desc') p.set('order', m.order);
	if (m.page !== 1) p.set('page', String(m.page));
	if (m.pageSize !== 25) p.set('pageSize', String(m.pageSize));
	const s = p.toString();
	return s ? `?${s}` : '';
}
