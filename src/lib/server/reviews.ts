import { and, asc, count, desc, eq, inArray, lt, sql, type SQL } from 'drizzle-orm';
import { z } from 'zod';
import { recordAudit } from './audit';
import { db } from './db';
import {
	acquisitionTokens,
	measurements,
	memberships,
	projects,
	readings,
	signOffs,
	users
} from './db/schema';
import { env } from './env';
import { sendMail } from './mail';

/**
 * Sign-off: a reviewer approves a reading, or returns it to the analyst with a comment. An
 * approved reading is locked; a re-analysis makes a new reading that waits for its own decision.
 */

export type Decision = 'approved' | 'returned';
export type SignOffResult =
	| { ok: true; decision: Decision }
	| { ok: false; reason: 'not-found' | 'locked' | 'comment-required' };

const REVIEW_ROLES = ['reviewer', 'owner'] as const;

/** The decisions on one reading, newest first, with the reviewer's name. */
export async function decisionsFor(readingId: string) {
	return db
		.select({
			id: signOffs.id,
			decision: signOffs.decision,
			comment: signOffs.comment,
			decidedAt: signOffs.decidedAt,
			reviewerName: users.name,
			reviewerEmail: users.email
		})
		.from(signOffs)
		.leftJoin(users, eq(users.id, signOffs.reviewerId))
		.where(eq(signOffs.readingId, readingId))
		.orderBy(desc(signOffs.decidedAt), desc(signOffs.id));
}

/** A reading's sign-off as the reading JSON carries it (openapi.ts `sign_off`). */
export async function signOffJson(readingId: string, required: boolean) {
	const decisions = (await decisionsFor(readingId)).map((d) => ({
		decision: d.decision,
		reviewer: d.reviewerName ?? d.reviewerEmail ?? null,
		decided_at: d.decidedAt.toISOString(),
		comment: d.comment
	}));
	const newest = decisions[0];
	return {
		state: newest?.decision ?? (required ? 'awaiting' : 'not-required'),
		reviewer: newest?.reviewer ?? null,
		decided_at: newest?.decided_at ?? null,
		comment: newest?.comment ?? null,
		decisions
	};
}

/** Which of these readings are approved (for tables). */
export async function approvedAmong(readingIds: string[]): Promise<Set<string>> {
	if (!readingIds.length) return new Set();
	const rows = await db
		.select({ readingId: signOffs.readingId })
		.from(signOffs)
		.where(and(inArray(signOffs.readingId, readingIds), eq(signOffs.decision, 'approved')));
	return new Set(rows.map((r) => r.readingId));
}

export function approve(projectId: number, readingId: string, reviewerId: string, comment = '') {
	return decide(projectId, readingId, reviewerId, 'approved', comment.trim());
}

/** `return` is a reserved word, hence the name. */
export function returnReading(
	projectId: number,
	readingId: string,
	reviewerId: string,
	comment: string
) {
	return decide(projectId, readingId, reviewerId, 'returned', comment.trim());
}

async function decide(
	projectId: number,
	readingId: string,
	reviewerId: string,
	decision: Decision,
	comment: string
): Promise<SignOffResult> {
	if (decision === 'returned' && !comment) return { ok: false, reason: 'comment-required' };
	if (!z.uuid().safeParse(readingId).success) return { ok: false, reason: 'not-found' };
	let outcome: SignOffResult;
	let measurement: typeof measurements.$inferSelect | undefined;
	try {
		outcome = await db.transaction(async (tx) => {
			// Lock the reading row so two reviewers deciding at once are serialised.
			const [row] = await tx
				.select({ reading: readings, measurement: measurements })
				.from(readings)
				.innerJoin(measurements, eq(measurements.id, readings.measurementId))
				.where(and(eq(readings.id, readingId), eq(measurements.projectId, projectId)))
				.for('update', { of: readings });
			if (!row) return { ok: false, reason: 'not-found' } as const;
			measurement = row.measurement;
			const [approved] = await tx
				.select({ id: signOffs.id })
				.from(signOffs)
				.where(and(eq(signOffs.readingId, readingId), eq(signOffs.decision, 'approved')));
			if (approved) return { ok: false, reason: 'locked' } as const;
			const [entry] = await tx
				.insert(signOffs)
				.values({ readingId, reviewerId, decision, comment })
				.returning();
			await recordAudit(tx, {
				projectId,
				actor: { userId: reviewerId },
				action: decision === 'approved' ? 'reading.approve' : 'reading.return',
				objectType: 'reading',
				objectId: readingId,
				after: { decision, comment, signOffId: entry.id, measurementId: row.measurement.id }
			});
			return { ok: true, decision } as const;
		});
	} catch (e) {
		// The partial unique index is the last word if two approvals race past the check.
		if (isUniqueViolation(e)) return { ok: false, reason: 'locked' };
		throw e;
	}
	if (outcome.ok && decision === 'returned' && measurement) {
		await tellAnalyst(projectId, measurement, comment).catch((e) =>
			console.error('Could not send the returned-reading e-mail', e)
		);
	}
	return outcome;
}

function isUniqueViolation(e: unknown): boolean {
	for (let x = e as { code?: string; cause?: unknown } | undefined; x; x = x.cause as typeof x) {
		if (x.code === '23505') return true;
	}
	return false;
}

/** E-mail the person who uploaded the measurement (or created the token that did). */
async function tellAnalyst(
	projectId: number,
	m: typeof measurements.$inferSelect,
	comment: string
) {
	let to: string | null = null;
	if (m.uploadedBy) {
		const [u] = await db
			.select({ email: users.email })
			.from(users)
			.where(eq(users.id, m.uploadedBy));
		to = u?.email ?? null;
	}
	if (!to && m.uploadedByToken) {
		const [u] = await db
			.select({ email: users.email })
			.from(acquisitionTokens)
			.innerJoin(users, eq(users.id, acquisitionTokens.createdBy))
			.where(eq(acquisitionTokens.id, m.uploadedByToken));
		to = u?.email ?? null;
	}
	if (!to) return;
	const [p] = await db
		.select({ slug: projects.slug, name: projects.name })
		.from(projects)
		.where(eq(projects.id, projectId));
	const link = `${env().ORIGIN}/projects/${p.slug}/measurements/${m.id}`;
	const what = m.label ? `“${m.label}”` : 'a measurement';
	await sendMail({
		to,
		subject: `Reading returned: ${m.label ?? 'measurement'} in ${p.name}`,
		text: `A reviewer returned the reading of ${what} in ${p.name} with this comment:\n\n${comment}\n\nOpen the reading: ${link}\n`
	});
}

// The review queue.

export const SEVERITIES = ['info', 'warning', 'error'] as const;

export const queueFilters = z.object({
	project: z.string().max(100).optional(),
	series: z.string().max(100).optional(),
	/** The reading's worst flag is at least this severe. */
	severity: z.enum(SEVERITIES).optional(),
	/** Waiting at least this many days. */
	age: z.coerce.number().int().min(1).max(3650).optional()
});
export type QueueFilters = z.infer<typeof queueFilters>;

function queueWhere(userId: string, f: QueueFilters): SQL {
	const where: (SQL | undefined)[] = [
		eq(measurements.status, 'done'),
		eq(projects.signOffRequired, true),
		// The newest reading of its measurement: older ones were superseded by a re-analysis.
		sql`${readings.id} = (select r.id from ${readings} r where r.measurement_id = ${measurements.id} order by r.created_at desc limit 1)`,
		sql`not exists (select 1 from ${signOffs} s where s.reading_id = ${readings.id})`,
		sql`exists (select 1 from ${memberships} ms where ms.project_id = ${projects.id} and ms.user_id = ${userId} and ms.role in ('reviewer', 'owner'))`
	];
	if (f.project) where.push(eq(projects.slug, f.project));
	if (f.series) where.push(eq(measurements.series, f.series));
	if (f.severity) {
		const at = SEVERITIES.indexOf(f.severity);
		where.push(inArray(readings.worstSeverity, SEVERITIES.slice(at)));
	}
	if (f.age) where.push(lt(readings.createdAt, new Date(Date.now() - f.age * 86_400_000)));
	return and(...where)!;
}

export async function reviewQueue(userId: string, f: QueueFilters, limit = 200) {
	return db
		.select({
			readingId: readings.id,
			readingAt: readings.createdAt,
			temperatureK: readings.temperatureK,
			expandedUncertaintyK: readings.expandedUncertaintyK,
			coverageFactor: readings.coverageFactor,
			worstSeverity: readings.worstSeverity,
			flagCodes: readings.flagCodes,
			measurementId: measurements.id,
			label: measurements.label,
			series: measurements.series,
			batch: measurements.batch,
			projectSlug: projects.slug,
			projectName: projects.name
		})
		.from(readings)
		.innerJoin(measurements, eq(measurements.id, readings.measurementId))
		.innerJoin(projects, eq(projects.id, measurements.projectId))
		.where(queueWhere(userId, f))
		.orderBy(asc(readings.createdAt), asc(readings.id))
		.limit(limit);
}

export async function reviewQueueCount(userId: string, f: QueueFilters = {}) {
	const [row] = await db
		.select({ n: count() })
		.from(readings)
		.innerJoin(measurements, eq(measurements.id, readings.measurementId))
		.innerJoin(projects, eq(projects.id, measurements.projectId))
		.where(queueWhere(userId, f));
	return row.n;
}

/** The projects where this person may sign off, for the queue's filter and the navigation. */
export async function reviewedProjects(userId: string) {
	return db
		.select({ slug: projects.slug, name: projects.name })
		.from(memberships)
		.innerJoin(projects, eq(projects.id, memberships.projectId))
		.where(
			and(
				eq(memberships.userId, userId),
				inArray(memberships.role, [...REVIEW_ROLES]),
				eq(projects.signOffRequired, true)
			)
		)
		.orderBy(asc(projects.name));
}
