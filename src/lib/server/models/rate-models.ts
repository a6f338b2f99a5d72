// Rate models saved for a setup (by the rate planner, a calibration fit or by hand), with who and when.
import { and, desc, eq } from 'drizzle-orm';
import type { z } from 'zod';
import type { rateModelSchema } from '../../physics/rate-model-schema';
import type { Db } from '../db';
import { rateModels, user } from '../db/schema';

export type StoredRateModel = z.output<typeof rateModelSchema>;

export async function saveRateModel(db: Db, setupId: string, model: StoredRateModel, actorId: string | null, note?: string) {
	const [row] = await db
		.insert(rateModels)
		.values({ setupId, process: model.process, model, note: note ?? null, createdBy: actorId })
		.returning();
	return row;
}

/** The newest model of a process for a setup, or null. */
export async function currentRateModel(db: Db, setupId: string, process: 'switching' | 'escape' = 'switching') {
	const [row] = await db
		.select({ model: rateModels.model, createdAt: rateModels.createdAt, createdBy: user.name })
		.from(rateModels)
		.leftJoin(user, eq(user.id, rateModels.createdBy))
		.where(and(eq(rateModels.setupId, setupId), eq(rateModels.process, process)))
		.orderBy(desc(rateModels.id))
		.limit(1);
	return row ? { ...(row.model as StoredRateModel), savedAt: row.createdAt, savedBy: row.createdBy } : null;
}

export async function rateModelHistory(db: Db, setupId: string) {
	return db
		.select({
			id: rateModels.id,
			process: rateModels.process,
			model: rateModels.model,
			note: rateModels.note,
			createdAt: rateModels.createdAt,
			createdBy: user.name
		})
		.from(rateModels)
		.leftJoin(user, eq(user.id, rateModels.createdBy))
		.where(eq(rateModels.setupId, setupId))
		.orderBy(desc(rateModels.id))
		.limit(50);
}
