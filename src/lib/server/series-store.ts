import { and, asc, count, desc, eq, inArray, isNotNull, isNull, ne, or, sql } from 'drizzle-orm';
import { z } from 'zod';
import { inferSeriesKind, SERIES_KINDS, type SeriesKind } from '$lib/series/kind';
import { recordAudit, type Actor } from './audit';
import { db, type Database } from './db';
import { measurements, series } from './db/schema';

/**
 * Series as entities: created on the series page or by the API, or made on the fly when a
 * measurement names a series nobody created. Measurements join by their `series` label.
 */

export type Series = typeof series.$inferSelect;
type Tx = Pick<Database, 'select' | 'insert' | 'update' | 'query'>;

const KIND_MESSAGE = `The kind must be one of ${SERIES_KINDS.join(', ')}.`;

const name = z
	.string({ error: 'Give the series a name.' })
	.trim()
	.min(1, 'Give the series a name.')
	.max(100, 'At most 100 characters (the limit of a measurement’s series label).');
const kind = z.enum(SERIES_KINDS, { error: KIND_MESSAGE });
const description = z.string().trim().max(2000, 'At most 2000 characters.');
const kelvin = (which: string) =>
	z
		.number({ error: `The ${which} specification limit must be a number (K).` })
		.positive(`The ${which} specification limit must be above 0 K.`)
		.max(10_000, `The ${which} specification limit must be at most 10 000 K.`);
const baseline = z
	.number({ error: 'The baseline size must be a whole number of readings.' })
	.int('The baseline size must be a whole number of readings.')
	.min(2, 'Control limits need a baseline of at least two readings.')
	.max(100_000);

const specOrder = (v: { lower_spec_k?: number | null; upper_spec_k?: number | null }) =>
	v.lower_spec_k == null || v.upper_spec_k == null || v.lower_spec_k < v.upper_spec_k;
const SPEC_ORDER = {
	path: ['upper_spec_k'],
	message: 'The upper specification limit must lie above the lower one.'
};

/** POST /api/v1/series. */
export const seriesBody = z
	.object({
		name,
		kind,
		description: description.default(''),
		baseline_size: baseline
			.nullable()
			.default(null)
			.describe('How many first readings fix the centre line and control limits; null: all.'),
		lower_spec_k: kelvin('lower').nullable().optional().describe('Set by a project owner only.'),
		upper_spec_k: kelvin('upper').nullable().optional().describe('Set by a project owner only.')
	})
	.refine(specOrder, SPEC_ORDER);
export type SeriesBody = z.infer<typeof seriesBody>;

/** An empty form field means "none"; anything else must parse as a number. */
const fromField = <T extends z.ZodType>(s: T) =>
	z.preprocess(
		(v) => (typeof v === 'string' ? (v.trim() === '' ? null : Number(v)) : v),
		s.nullable()
	);

/** The create and edit forms of the series page (spec limits are only read from owners). */
export const seriesForm = z
	.object({
		name,
		kind,
		description: description.default(''),
		baseline_size: fromField(baseline),
		lower_spec_k: fromField(kelvin('lower')).optional(),
		upper_spec_k: fromField(kelvin('upper')).optional()
	})
	.refine(specOrder, SPEC_ORDER);
export type SeriesForm = z.infer<typeof seriesForm>;

export class SeriesError extends Error {
	constructor(
		readonly status: number,
		readonly field: string,
		message: string
	) {
		super(message);
	}
}

const isUniqueViolation = (err: unknown) => {
	const e = err as { code?: string; cause?: { code?: string } };
	return e?.code === '23505' || e?.cause?.code === '23505';
};
const TAKEN = () =>
	new SeriesError(409, 'name', 'This project already has a series with that name.');

export interface SeriesInput {
	name: string;
	kind: SeriesKind;
	description: string;
	baseline_size: number | null;
	lower_spec_k?: number | null;
	upper_spec_k?: number | null;
}

const specOf = (s: Pick<Series, 'lowerSpecK' | 'upperSpecK'>) => ({
	lower_spec_k: s.lowerSpecK,
	upper_spec_k: s.upperSpecK
});
const audited = (s: Series) => ({
	name: s.name,
	kind: s.kind,
	description: s.description,
	baseline_size: s.baselineSize,
	...specOf(s)
});

export async function createSeries(
	projectId: number,
	input: SeriesInput,
	actor: Actor
): Promise<Series> {
	try {
		return await db.transaction(async (tx) => {
			const [row] = await tx
				.insert(series)
				.values({
					projectId,
					name: input.name,
					kind: input.kind,
					description: input.description,
					baselineSize: input.baseline_size,
					lowerSpecK: input.lower_spec_k ?? null,
					upperSpecK: input.upper_spec_k ?? null,
					createdBy: actor.userId ?? null
				})
				.returning();
			await recordAudit(tx, {
				projectId,
				actor,
				action: 'series.create',
				objectType: 'series',
				objectId: row.id,
				after: audited(row)
			});
			return row;
		});
	} catch (err) {
		if (isUniqueViolation(err)) throw TAKEN();
		throw err;
	}
}

/**
 * Change a series. Renaming also relabels its measurements, so they stay in it. Specification
 * limits change only when `withSpec` (the caller is an owner); otherwise they are kept.
 */
export async function updateSeries(
	projectId: number,
	id: number,
	input: SeriesInput,
	actor: Actor,
	withSpec: boolean
): Promise<Series> {
	try {
		return await db.transaction(async (tx) => {
			const before = await tx.query.series.findFirst({
				where: and(eq(series.id, id), eq(series.projectId, projectId))
			});
			if (!before) throw new SeriesError(404, 'name', 'This project has no such series.');
			const [after] = await tx
				.update(series)
				.set({
					name: input.name,
					kind: input.kind,
					description: input.description,
					baselineSize: input.baseline_size,
					...(withSpec
						? { lowerSpecK: input.lower_spec_k ?? null, upperSpecK: input.upper_spec_k ?? null }
						: {})
				})
				.where(eq(series.id, id))
				.returning();
			if (after.name !== before.name) {
				await tx
					.update(measurements)
					.set({ series: after.name })
					.where(and(eq(measurements.projectId, projectId), eq(measurements.series, before.name)));
			}
			await recordAudit(tx, {
				projectId,
				actor,
				action: 'series.update',
				objectType: 'series',
				objectId: id,
				before: audited(before),
				after: audited(after)
			});
			return after;
		});
	} catch (err) {
		if (isUniqueViolation(err)) throw TAKEN();
		throw err;
	}
}

/**
 * The series a measurement names, made with an inferred kind when it does not exist yet. Runs
 * inside the caller's transaction (the upload's), so the new measurement counts in the profile.
 * Returns null when neither a series nor a measurement with that label exists.
 */
export async function ensureSeries(
	tx: Tx,
	projectId: number,
	seriesName: string | null | undefined,
	actor: Actor
): Promise<Series | null> {
	if (!seriesName) return null;
	const existing = await tx.query.series.findFirst({
		where: and(eq(series.projectId, projectId), eq(series.name, seriesName))
	});
	if (existing) return existing;
	const [profile] = await tx
		.select({
			measurements: count(),
			placed: sql<number>`count(*) filter (where ${measurements.x} is not null and ${measurements.y} is not null)::int`,
			batched: sql<number>`count(${measurements.batch})::int`,
			powers: sql<number>`count(distinct ${measurements.laserPowerMw})::int`,
			powered: sql<number>`count(${measurements.laserPowerMw})::int`,
			timed: sql<number>`count(${measurements.acquiredAt})::int`
		})
		.from(measurements)
		.where(and(eq(measurements.projectId, projectId), eq(measurements.series, seriesName)));
	if (!profile?.measurements) return null;
	const [row] = await tx
		.insert(series)
		.values({ projectId, name: seriesName, kind: inferSeriesKind(profile) })
		.onConflictDoNothing()
		.returning();
	if (!row) {
		// Another upload naming the same new series made it first.
		return (await tx.query.series.findFirst({
			where: and(eq(series.projectId, projectId), eq(series.name, seriesName))
		}))!;
	}
	await recordAudit(tx, {
		projectId,
		actor,
		action: 'series.create',
		objectType: 'series',
		objectId: row.id,
		after: { ...audited(row), inferred_from: profile }
	});
	return row;
}

/** A series by name; a label that measurements carry from before series were entities is adopted. */
export async function findSeries(projectId: number, seriesName: string): Promise<Series | null> {
	return db.transaction((tx) => ensureSeries(tx, projectId, seriesName, {}));
}

export interface SeriesSummary extends Series {
	measurements: number;
}

export async function listSeries(projectId: number): Promise<SeriesSummary[]> {
	const orphans = await db
		.selectDistinct({ name: measurements.series })
		.from(measurements)
		.leftJoin(
			series,
			and(eq(series.projectId, measurements.projectId), eq(series.name, measurements.series))
		)
		.where(
			and(eq(measurements.projectId, projectId), isNotNull(measurements.series), isNull(series.id))
		);
	for (const o of orphans) await findSeries(projectId, o.name!);
	const counts = db
		.select({ name: measurements.series, n: count().as('n') })
		.from(measurements)
		.where(and(eq(measurements.projectId, projectId), isNotNull(measurements.series)))
		.groupBy(measurements.series)
		.as('counts');
	const rows = await db
		.select({ s: series, n: counts.n })
		.from(series)
		.leftJoin(counts, eq(counts.name, series.name))
		.where(eq(series.projectId, projectId))
		.orderBy(asc(series.name));
	return rows.map((r) => ({ ...r.s, measurements: Number(r.n ?? 0) }));
}

/** The project's newest measurements outside this series, to pick from on the series page. */
export async function measurementsOutside(projectId: number, seriesName: string, limit = 200) {
	return db
		.select({
			id: measurements.id,
			label: measurements.label,
			batch: measurements.batch,
			series: measurements.series,
			status: measurements.status,
			createdAt: measurements.createdAt
		})
		.from(measurements)
		.where(
			and(
				eq(measurements.projectId, projectId),
				or(isNull(measurements.series), ne(measurements.series, seriesName))
			)
		)
		.orderBy(desc(measurements.createdAt))
		.limit(limit);
}

export const addMeasurementsForm = z.object({
	ids: z
		.array(z.uuid('Choose measurements from the list.'))
		.min(1, 'Tick at least one measurement to add.')
		.max(500, 'Add at most 500 measurements at a time.')
});

/** Put measurements of the project into a series (moving them out of any other one). */
export async function addToSeries(
	projectId: number,
	s: Series,
	ids: string[],
	actor: Actor
): Promise<number> {
	return db.transaction(async (tx) => {
		const before = await tx
			.select({ id: measurements.id, series: measurements.series })
			.from(measurements)
			.where(and(eq(measurements.projectId, projectId), inArray(measurements.id, ids)));
		const moved = before.filter((m) => m.series !== s.name);
		if (!moved.length) return 0;
		await tx
			.update(measurements)
			.set({ series: s.name })
			.where(
				inArray(
					measurements.id,
					moved.map((m) => m.id)
				)
			);
		await recordAudit(tx, {
			projectId,
			actor,
			action: 'series.add-measurements',
			objectType: 'series',
			objectId: s.id,
			before: moved.map((m) => ({ measurement: m.id, series: m.series })),
			after: { series: s.name, measurements: moved.map((m) => m.id) }
		});
		return moved.length;
	});
}
