// The field a JSON API message names ("aux_limit.limits[1].above: …"). Only the replay action still
// reads the replay API's text; once it calls the replay service directly and returns superforms'
// errors, this goes. The rules page itself gets its errors as data.
import type { Draft } from './rules-draft';
import { placeIssues } from './rules-validation';
import type { KindSpec } from './rule-specs';

/**
 * The field an API message names, in the form's dotted spelling: "aux_limit.limits[1].above: …" and
 * "detector rules: lock_lost.threshold: …" both name a field; a message without one stays whole.
 */
export function messageField(message: string, draft: Draft, specs: KindSpec[]): { field: string | null; text: string } {
	const m = /^(?:detector rules:\s*)?([A-Za-z_][\w.[\]]*)\s*:\s*(.+)$/s.exec(message.trim());
	if (!m) return { field: null, text: message };
	const path = m[1].replace(/\[(\d+)\]/g, '.$1').replace(/^rules\./, '');
	if (!specs.some((s) => s.kind === path.split('.')[0])) return { field: null, text: message };
	const [field] = Object.keys(placeIssues([{ path: path.split('.'), message: m[2] }], draft, specs));
	return { field, text: m[2] };
}
