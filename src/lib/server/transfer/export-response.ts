// What the export routes share: the span query, and the streamed download response.
import { z } from 'zod';
import { MAX_T_MS } from '../../protocol/frame';
import { pullStream } from './pull-stream';

/** Header with the number of frames (rows or lines) the body will hold, for the browser's progress bar. */
export const FRAMES_HEADER = 'X-Phasewarden-Frames';

const ms = z.coerce.number().int('must be whole milliseconds').min(0, 'must not be negative').max(MAX_T_MS, 'is beyond the date range');
export const exportSpanQuery = z
	.object({ from_ms: ms.optional(), to_ms: ms.optional() })
	.refine((q) => q.from_ms === undefined || q.to_ms === undefined || q.from_ms < q.to_ms, {
		message: 'from_ms must be before to_ms',
		path: ['from_ms']
	});

export function downloadResponse(body: AsyncIterable<string>, opts: { contentType: string; fileName: string; rows?: number }): Response {
	const headers: Record<string, string> = {
		'content-type': opts.contentType,
		'content-disposition': `attachment; filename="${opts.fileName}"`,
		'cache-control': 'no-store'
	};
	if (opts.rows !== undefined) headers[FRAMES_HEADER.toLowerCase()] = String(opts.rows);
	return new Response(pullStream(body), { headers });
}
