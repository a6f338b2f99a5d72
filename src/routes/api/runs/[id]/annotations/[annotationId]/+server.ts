// Deleting one's own note.
import { error } from '@sveltejs/kit';
import { AnnotationError, deleteAnnotation } from '$lib/server/annotations/service';
import { json, requireRole } from '$lib/server/http/guard';
import { getRuntime } from '$lib/server/runtime';
import type { RequestHandler } from './$types';

export const DELETE: RequestHandler = async (event) => {
	const user = requireRole(event, 'operator');
	const id = Number(event.params.annotationId);
	if (!Number.isInteger(id) || id < 1) error(400, 'annotationId: must be a positive whole number');
	const { db } = await getRuntime();
	try {
		await deleteAnnotation(db, event.params.id, id, user.id);
	} catch (err) {
		if (err instanceof AnnotationError) error(err.status, err.message);
		throw err;
	}
	return json({ ok: true });
};
