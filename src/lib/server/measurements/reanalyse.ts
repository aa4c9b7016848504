import { asc, eq } from 'drizzle-orm';
import type { MeasurementMetadata, ReanalysisSettings } from '../../measurement-metadata';
import { recordAudit, type Actor } from '../audit';
import { db } from '../db';
import { analyses, instrumentProfileVersions, measurements } from '../db/schema';
import { problem } from '../problem';
import { enqueueAnalysis } from './jobs';
import { checkNamedCalibration, profileCalibrations } from './resolve';

/**
 * Queue a new analysis of a stored measurement with some settings changed. It makes a new
 * reading; the earlier readings stay as they are. Another calibration of the measurement's
 * profile may be named: its C ± u then replaces the one used before.
 */
export async function requestReanalysis(
	projectId: number,
	measurementId: string,
	changes: ReanalysisSettings,
	actor: Actor
): Promise<string | null> {
	const id = await db.transaction(async (tx) => {
		const m = await tx.query.measurements.findFirst({ where: eq(measurements.id, measurementId) });
		if (!m || m.projectId !== projectId) return null;
		// The upload's own analysis says which profile version and calibration the metadata holds.
		const [upload] = await tx
			.select({
				profileVersionId: analyses.profileVersionId,
				calibrationId: analyses.calibrationId
			})
			.from(analyses)
			.where(eq(analyses.measurementId, measurementId))
			.orderBy(asc(analyses.createdAt))
			.limit(1);
		let settings: MeasurementMetadata = { ...m.metadata, ...changes };
		let calibrationId = upload?.calibrationId ?? null;
		if (changes.calibration !== undefined) {
			const chosen = await calibrationFor(
				upload?.profileVersionId ?? null,
				changes.calibration,
				settings
			);
			settings = { ...settings, c_factor: chosen.c, u_c_factor: chosen.uC };
			calibrationId = chosen.id;
		} else if (changes.c_factor !== undefined || changes.u_c_factor !== undefined) {
			// A C typed in by hand is no calibration's.
			settings = { ...settings, calibration: undefined };
			calibrationId = null;
		}
		const [analysis] = await tx
			.insert(analyses)
			.values({
				measurementId,
				settings,
				profileVersionId: upload?.profileVersionId ?? null,
				calibrationId,
				requestedBy: actor.userId ?? null,
				requestedByToken: actor.tokenId ?? null
			})
			.returning({ id: analyses.id });
		await tx
			.update(measurements)
			.set({ status: 'queued' })
			.where(eq(measurements.id, measurementId));
		await recordAudit(tx, {
			projectId,
			actor,
			action: 'measurement.reanalyse',
			objectType: 'measurement',
			objectId: measurementId,
			before: Object.fromEntries(
				Object.keys(changes).map((k) => [k, m.metadata[k as keyof typeof m.metadata]])
			),
			after: changes
		});
		return analysis.id;
	});
	if (id) await enqueueAnalysis(id);
	return id;
}

async function calibrationFor(
	profileVersionId: number | null,
	calibrationId: number,
	settings: MeasurementMetadata
) {
	const [version] = profileVersionId
		? await db
				.select()
				.from(instrumentProfileVersions)
				.where(eq(instrumentProfileVersions.id, profileVersionId))
		: [];
	if (!version) {
		throw problem(
			422,
			'This measurement names no instrument profile, so it has no calibrations to choose from; give C and u(C) instead.',
			{ field: 'calibration' }
		);
	}
	const candidates = await profileCalibrations(version.profileId);
	return checkNamedCalibration(
		candidates.find((c) => c.id === calibrationId),
		calibrationId,
		settings.profile === undefined ? `#${version.profileId}` : String(settings.profile),
		settings.modes?.[0] ?? 0,
		version
	);
}
