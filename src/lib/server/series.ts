import { and, desc, eq, inArray } from 'drizzle-orm';
import { db } from './db';
import { measurements, readings } from './db/schema';

/**
 * The readings of a series: its measurements (those carrying its name as their `series` label)
 * with the newest reading of each. The series themselves live in series-store.ts.
 */

/** One measurement of a series with its newest reading, in a compact form for the page. */
export interface SeriesPoint {
	id: string;
	/** The newest reading's id; null when the measurement has none yet. */
	readingId: string | null;
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
			readingId: readings.id,
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
				readingId: r?.readingId ?? null,
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
