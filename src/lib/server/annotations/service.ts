// Notes pinned to a run's time or span. Listing is shared with the run summary and the report.
import { and, asc, eq, gte, lt, or, sql, type SQL } from 'drizzle-orm';
import type { Annotation, AnnotationInput } from '../../annotations/schema';
import type { Db } from '../db';
import { runAnnotations } from '../db/schema';

type Row = typeof runAnnotations.$inferSelect;

function toAnnotation(r: Row): Annotation {
	return {
		id: r.id,
		runId: r.runId,
		at_ms: r.atMs,
		until_ms: r.untilMs,
		text: r.text,
		authorId: r.authorId,
		authorName: r.authorName,
		createdAt: r.createdAt.toISOString()
	};
}

/**
 * The run's notes in time order; with from_ms/to_ms only those that touch [from_ms, to_ms):
 * a note at an instant inside it, or a span overlapping it.
 */
export async function listAnnotations(db: Db, runId: string, from_ms?: number, to_ms?: number): Promise<Annotation[]> {
	const where: SQL[] = [eq(runAnnotations.runId, runId)];
	if (to_ms !== undefined) where.push(lt(runAnnotations.atMs, to_ms));
	if (from_ms !== undefined) {
		where.push(
			or(gte(runAnnotations.atMs, from_ms), and(sql`${runAnnotations.untilMs} is not null`, sql`${runAnnotations.untilMs} > ${from_ms}`))!
		);
	}
	const rows = await db
		.select()
		.from(runAnnotations)
		.where(and(...where))
		.orderBy(asc(runAnnotations.atMs), asc(runAnnotations.id));
	return rows.map(toAnnotation);
}

export async function addAnnotation(
	db: Db,
	runId: string,
	author: { id: string; name: string },
	input: AnnotationInput
): Promise<Annotation> {
	const [row] = await db
		.insert(runAnnotations)
		.values({ runId, atMs: input.at_ms, untilMs: input.until_ms ?? null, text: input.text, authorId: author.id, authorName: author.name })
		.returning();
	return toAnnotation(row);
}

export class AnnotationError extends Error {
	constructor(
		readonly status: 403 | 404,
		message: string
	) {
		super(message);
	}
}

/** Removes a note; only its author may (the note speaks in their name). */
export async function deleteAnnotation(db: Db, runId: string, id: number, userId: string): Promise<void> {
	const [row] = await db
		.select()
		.from(runAnnotations)
		.where(and(eq(runAnnotations.runId, runId), eq(runAnnotations.id, id)));
	if (!row) throw new AnnotationError(404, `no note ${id} on this run`);
	if (row.authorId !== userId) throw new AnnotationError(403, 'only the author of a note may delete it');
	await db.delete(runAnnotations).where(eq(runAnnotations.id, id));
}
