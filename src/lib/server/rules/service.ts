// The detector rules of a setup: defaults until an operator changes them; every changed field is
// recorded with who, when, old and new value, and the changed rule's version goes up by one.
import { desc, eq } from 'drizzle-orm';
import { detectorRulesSchema, parseDetectorRules, type DetectorRules } from '../../detect/rules';
import type { Db } from '../db';
import { ruleChanges, setupRules, user } from '../db/schema';

export async function getSetupRules(db: Db, setupId: string): Promise<DetectorRules> {
	const [row] = await db.select({ rules: setupRules.rules }).from(setupRules).where(eq(setupRules.setupId, setupId));
	return parseDetectorRules(row?.rules ?? {});
}

type Change = { field: string; oldValue: unknown; newValue: unknown };

/** Field-by-field differences (dotted paths), ignoring the version numbers themselves. */
export function diffRules(before: DetectorRules, after: DetectorRules): Change[] {
	const changes: Change[] = [];
	const walk = (a: unknown, b: unknown, path: string) => {
		if (JSON.stringify(a) === JSON.stringify(b)) return;
		const bothObjects = a && b && typeof a === 'object' && typeof b === 'object' && !Array.isArray(a) && !Array.isArray(b);
		if (!bothObjects) return changes.push({ field: path, oldValue: a ?? null, newValue: b ?? null });
		for (const key of new Set([...Object.keys(a as object), ...Object.keys(b as object)])) {
			if (key === 'version') continue;
			walk((a as Record<string, unknown>)[key], (b as Record<string, unknown>)[key], path ? `${path}.${key}` : key);
		}
	};
	walk(before, after, '');
	return changes;
}

/**
 * Validates and stores a whole rule set. Versions are the server's to set: each rule whose fields
 * changed gets its previous version + 1; the others keep theirs. Returns the stored rules and changes.
 */
export async function putSetupRules(db: Db, setupId: string, input: unknown, actorId: string) {
	const parsed = detectorRulesSchema.safeParse(input);
	if (!parsed.success) return { error: parsed.error } as const;
	return db.transaction(async (tx) => {
		const [row] = await tx.select({ rules: setupRules.rules }).from(setupRules).where(eq(setupRules.setupId, setupId));
		const before = parseDetectorRules(row?.rules ?? {});
		const next = structuredClone(parsed.data) as Record<string, { version: number }>;
		const changes = diffRules(before, parsed.data);
		for (const kind of Object.keys(next)) {
			const previous = (before as Record<string, { version: number }>)[kind]?.version ?? 1;
			const touched = changes.some((c) => c.field === kind || c.field.startsWith(`${kind}.`));
			next[kind].version = touched ? previous + 1 : previous;
		}
		const rules = parseDetectorRules(next);
		await tx
			.insert(setupRules)
			.values({ setupId, rules, updatedBy: actorId })
			.onConflictDoUpdate({ target: setupRules.setupId, set: { rules, updatedBy: actorId, updatedAt: new Date() } });
		if (changes.length) await tx.insert(ruleChanges).values(changes.map((c) => ({ setupId, actorId, ...c })));
		return { rules, changes } as const;
	});
}

export async function ruleHistory(db: Db, setupId: string) {
	return db
		.select({
			id: ruleChanges.id,
			at: ruleChanges.at,
			field: ruleChanges.field,
			oldValue: ruleChanges.oldValue,
			newValue: ruleChanges.newValue,
			actorName: user.name
		})
		.from(ruleChanges)
		.leftJoin(user, eq(user.id, ruleChanges.actorId))
		.where(eq(ruleChanges.setupId, setupId))
		.orderBy(desc(ruleChanges.id))
		.limit(200);
}
