import { error } from '@sveltejs/kit';
import { parseQuery, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import { getRun } from '$lib/server/runs/service';
import { downloadResponse, exportSpanQuery } from '$lib/server/transfer/export-response';
import { csvLayoutOf, exportFileName, exportFrameCount, exportSeqRange, runCsv } from '$lib/server/transfer/run-export';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	requireRole(event, 'observer');
	const span = parseQuery(event.url, exportSpanQuery);
	const { db } = await getRuntime();
	const run = await getRun(db, event.params.id);
	if (!run) error(404, 'no run with this id');
	const range = await exportSeqRange(db, run, span);
	const [layout, rows] = await Promise.all([csvLayoutOf(db, run), exportFrameCount(db, run, span, range)]);
	return downloadResponse(runCsv(db, run.id, range, layout, span), {
		contentType: 'text/csv; charset=utf-8',
		fileName: exportFileName(run, span, 'csv'),
		rows
	});
};
