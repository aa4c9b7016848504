import { and, asc, count, desc, eq, inArray, isNotNull, sql } from 'drizzle-orm';
import { db } from './db';
import { measurements, readings } from './db/schema';
import { seriesView, type SeriesView } from '$lib/series/view';

/**
 * Series are, in this slice, the free-text `series` label of measurements; a series as an entity
 * with a kind comes later. The view is chosen from what the measurements carry.
 */

export interface SeriesSummary {
	name: string;
	measurements: number;
	view: SeriesView;
}

export async function listSeries(projectId: number): Promise<SeriesSummary[]> {
	const rows = await db
		.select({
			name: measurements.series,
			measurements: count(),
			powers: sql<number>`count(distinct ${measurements.laserPowerMw})::int`,
			placed: sql<number>`count(*) filter (where ${measurements.x} is not null and ${measurements.y} is not null)::int`
		})
		.from(measurements)
		.where(and(eq(measurements.projectId, projectId), isNotNull(measurements.series)))
		.groupBy(measurements.series)
		.orderBy(asc(measurements.series));
	return rows.map((r) => ({
		name: r.name ?? '',
		measurements: r.measurements,
		view: seriesView(r)
	}));
}

/** One measurement of a series with its newest reading, in a compact form for the page. */
export interface SeriesPoint {
	id: string;
	label: string | null;
	batch: string | null;
	x: number | null;
	y: number | null;
	powerMw: number | null;
	/** acquired_at, else upload time (ISO 8601): the order of the control chart. */
	at: string;
	/** Temperature, standard and expanded uncertainty (K), coverage factor; null when none. */
	t: number | null;
	u: number | null;
	U: number | null;
	k: number | null;
	severity: string | null;
	flags: string[];
}

export async function loadSeriesPoints(projectId: number, name: string): Promise<SeriesPoint[]> {
	const ms = await db
		.select({
			id: measurements.id,
			label: measurements.label,
			batch: measurements.batch,
			x: measurements.x,
			y: measurements.y,
			powerMw: measurements.laserPowerMw,
			acquiredAt: measurements.acquiredAt,
			createdAt: measurements.createdAt
		})
		.from(measurements)
		.where(and(eq(measurements.projectId, projectId), eq(measurements.series, name)));
	if (!ms.length) return [];
	// The newest reading of each measurement, in one query.
	const rs = await db
		.selectDistinctOn([readings.measurementId], {
			measurementId: readings.measurementId,
			t: readings.temperatureK,
			u: readings.uTemperatureK,
			U: readings.expandedUncertaintyK,
			k: readings.coverageFactor,
			severity: readings.worstSeverity,
			flags: readings.flagCodes
		})
		.from(readings)
		.where(
			inArray(
				readings.measurementId,
				ms.map((m) => m.id)
			)
		)
		.orderBy(readings.measurementId, desc(readings.createdAt));
	const byId = new Map(rs.map((r) => [r.measurementId, r]));
	return ms
		.map((m) => {
			const r = byId.get(m.id);
			return {
				id: m.id,
				label: m.label,
				batch: m.batch,
				x: m.x,
				y: m.y,
				powerMw: m.powerMw,
				at: (m.acquiredAt ?? m.createdAt).toISOString(),
				t: r?.t ?? null,
				u: r?.u ?? null,
				U: r?.U ?? null,
				k: r?.k ?? null,
				severity: r?.severity ?? null,
				flags: r?.flags ?? []
			};
		})
		.sort((a, b) => a.at.localeCompare(b.at) || a.id.localeCompare(b.id));
}

export function viewFor(points: SeriesPoint[]): SeriesView {
	return seriesView({
		measurements: points.length,
		placed: points.filter((p) => p.x != null && p.y != null).length,
		powers: new Set(points.flatMap((p) => (p.powerMw != null ? [p.powerMw] : []))).size
	});
}
