import { and, asc, count, desc, eq, ilike, inArray, isNotNull, sql, type SQL } from 'drizzle-orm';
import { z } from 'zod';
import { db } from '$lib/server/db';
import {
	acquisitionTokens,
	analyses,
	measurements,
	readings,
	signOffs,
	users
} from '$lib/server/db/schema';
import type { Flag } from '$lib/thermometry/types';

/**
 * The project measurements table: one query for sorting, filtering and paging by URL search
 * params, with the newest reading of each row joined laterally. (The API's `listMeasurements`
 * pages by cursor in upload order only; a person's table needs sorting by T and label and page
 * numbers, so it has its own query.)
 */

const STATUSES = ['queued', 'analysing', 'done', 'failed'] as const;
export const SORTS = ['uploaded', 'temperature', 'label', 'status'] as const;
export const PAGE_SIZES = [25, 50, 100] as const;

const text = (max: number) => z.string().trim().max(max).optional().catch(undefined);

export const tableQuery = z.object({
	sort: z.enum(SORTS).catch('uploaded'),
	dir: z.enum(['asc', 'desc']).catch('desc'),
	status: z.enum(STATUSES).optional().catch(undefined),
	series: text(100),
	batch: text(100),
	flag: text(60),
	q: text(100),
	page: z.coerce.number().int().min(1).max(100_000).catch(1),
	per: z.coerce
		.number()
		.refine((n) => (PAGE_SIZES as readonly number[]).includes(n))
		.catch(50)
});
export type TableQuery = z.infer<typeof tableQuery>;

/** Read the table's state from the URL; blank values mean "not filtered". */
export function parseTableQuery(params: URLSearchParams): TableQuery {
	const raw = Object.fromEntries([...params].filter(([, v]) => v.trim() !== ''));
	return tableQuery.parse(raw);
}

const likePattern = (q: string) => `%${q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;

export async function measurementTable(projectId: number, q: TableQuery) {
	const latest = db
		.select({
			id: readings.id,
			temperatureK: readings.temperatureK,
			expandedUncertaintyK: readings.expandedUncertaintyK,
			coverageFactor: readings.coverageFactor,
			worstSeverity: readings.worstSeverity,
			flagCodes: readings.flagCodes,
			flags: sql<Flag[]>`${readings.result}->'flags'`.as('flags'),
			approved:
				sql<boolean>`exists (select 1 from ${signOffs} s where s.reading_id = "readings"."id" and s.decision = 'approved')`.as(
					'approved'
				),
			// The comment of the newest decision when that decision sent the reading back.
			returnedComment: sql<
				string | null
			>`(select case when s.decision = 'returned' then s.comment end from ${signOffs} s where s.reading_id = "readings"."id" order by s.decided_at desc, s.id desc limit 1)`.as(
				'returned_comment'
			)
		})
		.from(readings)
		.where(eq(readings.measurementId, measurements.id))
		.orderBy(desc(readings.createdAt))
		.limit(1)
		.as('latest');

	const where: (SQL | undefined)[] = [eq(measurements.projectId, projectId)];
	if (q.status) where.push(eq(measurements.status, q.status));
	if (q.series) where.push(eq(measurements.series, q.series));
	if (q.batch) where.push(eq(measurements.batch, q.batch));
	if (q.q) where.push(ilike(measurements.label, likePattern(q.q)));
	if (q.flag) where.push(sql`${q.flag} = any(${latest.flagCodes})`);

	const dir = q.dir === 'asc' ? asc : desc;
	const nulls = q.dir === 'asc' ? sql`asc nulls last` : sql`desc nulls last`;
	const order: SQL[] = {
		uploaded: [dir(measurements.createdAt)],
		temperature: [sql`${latest.temperatureK} ${nulls}`],
		label: [sql`lower(${measurements.label}) ${nulls}`],
		status: [dir(measurements.status)]
	}[q.sort];

	const base = () =>
		db
			.select({
				id: measurements.id,
				createdAt: measurements.createdAt,
				label: measurements.label,
				batch: measurements.batch,
				series: measurements.series,
				status: measurements.status,
				reading: {
					id: latest.id,
					temperatureK: latest.temperatureK,
					expandedUncertaintyK: latest.expandedUncertaintyK,
					coverageFactor: latest.coverageFactor,
					worstSeverity: latest.worstSeverity,
					flags: latest.flags,
					approved: latest.approved,
					returnedComment: latest.returnedComment
				},
				userName: users.name,
				userEmail: users.email,
				tokenName: acquisitionTokens.name
			})
			.from(measurements)
			.leftJoinLateral(latest, sql`true`)
			.leftJoin(users, eq(users.id, measurements.uploadedBy))
			.leftJoin(acquisitionTokens, eq(acquisitionTokens.id, measurements.uploadedByToken))
			.where(and(...where));

	const [rows, [{ n: total }]] = await Promise.all([
		base()
			.orderBy(...order, desc(measurements.createdAt), desc(measurements.id))
			.limit(q.per)
			.offset((q.page - 1) * q.per),
		db
			.select({ n: count() })
			.from(measurements)
			.leftJoinLateral(latest, sql`true`)
			.where(and(...where))
	]);

	const failedIds = rows.filter((r) => r.status === 'failed').map((r) => r.id);
	const failures = failedIds.length
		? await db
				.selectDistinctOn([analyses.measurementId], {
					measurementId: analyses.measurementId,
					failure: analyses.failure
				})
				.from(analyses)
				.where(inArray(analyses.measurementId, failedIds))
				.orderBy(analyses.measurementId, desc(analyses.createdAt))
		: [];

	return {
		total,
		rows: rows.map((r) => ({
			...r,
			reading: r.reading?.id ? r.reading : null,
			failure: failures.find((f) => f.measurementId === r.id)?.failure ?? null
		}))
	};
}

/** What the filter controls offer: the project's series, batches and flag codes in use. */
export async function filterOptions(projectId: number) {
	const mine = eq(measurements.projectId, projectId);
	const [series, batches, flags, [{ pending }], [{ all }]] = await Promise.all([
		db
			.selectDistinct({ v: measurements.series })
			.from(measurements)
			.where(and(mine, isNotNull(measurements.series)))
			.orderBy(asc(measurements.series)),
		db
			.selectDistinct({ v: measurements.batch })
			.from(measurements)
			.where(and(mine, isNotNull(measurements.batch)))
			.orderBy(asc(measurements.batch)),
		db.execute<{ code: string }>(
			sql`select distinct unnest(${readings.flagCodes}) as code from ${readings}
				join ${measurements} on ${measurements.id} = ${readings.measurementId}
				where ${measurements.projectId} = ${projectId} order by 1`
		),
		db
			.select({ pending: count() })
			.from(measurements)
			.where(and(mine, inArray(measurements.status, ['queued', 'analysing']))),
		db.select({ all: count() }).from(measurements).where(mine)
	]);
	return {
		series: series.map((s) => s.v!),
		batches: batches.map((b) => b.v!),
		flags: [...flags].map((f) => f.code),
		pending,
		all
	};
}
