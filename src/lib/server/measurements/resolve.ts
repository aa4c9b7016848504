import { eq } from 'drizzle-orm';
import {
	chooseCalibration,
	appliesToBand,
	appliesToSetup,
	splitAtCutoff,
	type CalibrationCandidate
} from '../../instrument-flags';
import {
	modesOf,
	type MeasurementMetadata,
	type MeasurementRequest
} from '../../measurement-metadata';
import { db } from '../db';
import { calibrations, instrumentProfileVersions, type CalibrationInputs } from '../db/schema';
import { listProfiles, profileWithNewestVersion, resolveMaterial } from '../instruments';
import { problem } from '../problem';

/**
 * A measurement request turned into the settings the engine runs with: the project's own material
 * into its modes, the named instrument profile into its newest version's laser, detector and
 * filter cut-off, and its response calibration for the band into C ± u. What was taken from
 * where is returned with it, so the analysis can record the profile version and calibration.
 */

export interface ResolvedRequest {
	metadata: MeasurementMetadata;
	profileVersionId: number | null;
	calibrationId: number | null;
}

type CalibrationRow = typeof calibrations.$inferSelect;

/** The band a calibration was made at (a constant holds for any). */
export function calibrationMode(inputs: CalibrationInputs): number | undefined {
	return inputs.method === 'constant' ? undefined : inputs.modeCm1;
}

export const asCandidate = (
	c: CalibrationRow,
	madeWith: CalibrationCandidate['madeWith'] = null
): CalibrationRow & CalibrationCandidate => ({
	...c,
	modeCm1: calibrationMode(c.inputs),
	madeWith
});

export async function profileCalibrations(profileId: number) {
	const rows = await db
		.select({
			calibration: calibrations,
			laserNm: instrumentProfileVersions.laserNm,
			detector: instrumentProfileVersions.detector
		})
		.from(calibrations)
		.leftJoin(
			instrumentProfileVersions,
			eq(instrumentProfileVersions.id, calibrations.profileVersionId)
		)
		.where(eq(calibrations.profileId, profileId));
	return rows.map((r) =>
		asCandidate(
			r.calibration,
			r.laserNm !== null && r.detector !== null
				? { laserNm: r.laserNm, detector: r.detector }
				: null
		)
	);
}

/** A profile's active calibrations, most recently begun first, as the screens list them. */
async function activeCalibrations(
	profileId: number,
	setup?: { laserNm: number; detector: 'photon-counting' | 'energy' }
) {
	return (await profileCalibrations(profileId))
		.filter((c) => c.status === 'active' && (!setup || appliesToSetup(c, setup)))
		.sort((a, b) => b.validFrom.getTime() - a.validFrom.getTime() || b.id - a.id)
		.map((c) => ({
			id: c.id,
			method: c.method,
			c: c.c,
			uC: c.uC,
			modeCm1: c.modeCm1 ?? null,
			validFrom: c.validFrom,
			validUntil: c.validUntil
		}));
}

/** The same, in the API's snake_case names (GET /api/v1/profiles). */
export async function profilesJson(projectId: number) {
	return (await profilesForUpload(projectId)).map((p) => ({
		id: p.id,
		name: p.name,
		version: p.version,
		laser_nm: p.laserNm,
		detector: p.detector,
		filter_cutoff_cm1: p.filterCutoffCm1,
		calibrations: p.calibrations.map((c) => ({
			id: c.id,
			method: c.method,
			c: c.c,
			u_c: c.uC,
			mode_cm1: c.modeCm1,
			valid_from: c.validFrom.toISOString(),
			valid_until: c.validUntil?.toISOString() ?? null
		}))
	}));
}

/** The project's profiles with their newest version and active calibrations, for the upload page. */
export async function profilesForUpload(projectId: number) {
	const profiles = await listProfiles(projectId);
	return Promise.all(
		profiles
			.filter((p) => p.latest)
			.map(async (p) => ({
				id: p.id,
				name: p.name,
				version: p.latest!.version,
				laserNm: p.latest!.laserNm,
				detector: p.latest!.detector,
				filterCutoffCm1: p.latest!.filterCutoffCm1,
				calibrations: await activeCalibrations(p.id, p.latest!)
			}))
	);
}

/** The active calibrations of the profile a measurement was taken with, for a re-analysis. */
export async function calibrationsForReanalysis(profileVersionId: number | null) {
	if (profileVersionId === null) return [];
	const [version] = await db
		.select()
		.from(instrumentProfileVersions)
		.where(eq(instrumentProfileVersions.id, profileVersionId));
	if (!version) return [];
	// Only those made with the laser and detector the measurement was taken with.
	return activeCalibrations(version.profileId, version);
}

/**
 * A calibration by id for a band of a profile: it must belong to the profile, be active and
 * hold for the band. Refusals name the `calibration` field.
 */
export function checkNamedCalibration(
	found: (CalibrationRow & CalibrationCandidate) | undefined,
	id: number,
	profileName: string,
	modeCm1: number,
	setup: { laserNm: number; detector: 'photon-counting' | 'energy' }
) {
	const refuse = (message: string) => problem(422, message, { field: 'calibration' });
	if (!found) throw refuse(`Profile “${profileName}” has no calibration #${id}.`);
	if (found.status !== 'active')
		throw refuse(`Calibration #${id} is retired; choose an active one of “${profileName}”.`);
	if (!appliesToSetup(found, setup))
		throw refuse(
			`Calibration #${id} was made with ${found.madeWith?.laserNm} nm and ${found.madeWith?.detector}; the profile now has ${setup.laserNm} nm and ${setup.detector}.`
		);
	if (!appliesToBand(found, modeCm1))
		throw refuse(
			`Calibration #${id} was made at ${found.modeCm1} cm⁻¹ and does not hold for the band at ${modeCm1} cm⁻¹.`
		);
	return found;
}

export async function resolveRequest(
	projectId: number,
	request: MeasurementRequest,
	/** The acquisition time, else now: which calibrations had begun by then. */
	at: Date = request.acquired_at ? new Date(request.acquired_at) : new Date()
): Promise<ResolvedRequest> {
	const withModes = await resolveMaterial(projectId, request);
	if (withModes.profile === undefined) {
		// Without a profile the schema has already required these.
		return {
			metadata: {
				...withModes,
				laser_nm: withModes.laser_nm!,
				detector: withModes.detector ?? 'photon-counting',
				c_factor: withModes.c_factor!,
				u_c_factor: withModes.u_c_factor!
			},
			profileVersionId: null,
			calibrationId: null
		};
	}

	const found = await profileWithNewestVersion(db, projectId, withModes.profile);
	if (!found) {
		throw problem(
			422,
			`This project has no instrument profile “${withModes.profile}”. Create it on the Instruments page, or give laser_nm, detector, c_factor and u_c_factor instead.`,
			{ field: 'profile' }
		);
	}
	const { profile, version } = found;
	const { kept, below } = splitAtCutoff(modesOf(withModes), version.filterCutoffCm1);
	if (kept.length === 0) {
		throw problem(
			422,
			`Every band (${below.join(', ')} cm⁻¹) lies at or below the filter cut-off of profile “${profile.name}” (${version.filterCutoffCm1} cm⁻¹); no band can be used.`,
			{ field: 'modes' }
		);
	}

	let c_factor = withModes.c_factor;
	let u_c_factor = withModes.u_c_factor;
	let calibrationId: number | null = null;
	if (c_factor === undefined) {
		const candidates = await profileCalibrations(profile.id);
		const chosen =
			withModes.calibration !== undefined
				? checkNamedCalibration(
						candidates.find((c) => c.id === withModes.calibration),
						withModes.calibration,
						profile.name,
						kept[0],
						version
					)
				: chooseCalibration(candidates, kept[0], at, version);
		if (!chosen) {
			throw problem(
				422,
				`Profile “${profile.name}” has no active response calibration for the band at ${kept[0]} cm⁻¹, made with its present laser (${version.laserNm} nm) and detector, that had begun by ${at.toISOString().slice(0, 10)}. Add one on the profile's page, or give c_factor and u_c_factor.`,
				{ field: 'c_factor' }
			);
		}
		c_factor = chosen.c;
		u_c_factor = chosen.uC;
		calibrationId = chosen.id;
	}

	return {
		metadata: {
			...withModes,
			profile: profile.name,
			calibration: calibrationId ?? undefined,
			modes: kept,
			modes_below_cutoff: below.length ? below : undefined,
			laser_nm: withModes.laser_nm ?? version.laserNm,
			detector: withModes.detector ?? version.detector,
			filter_cutoff_cm1: version.filterCutoffCm1,
			c_factor,
			u_c_factor: u_c_factor!
		},
		profileVersionId: version.id,
		calibrationId
	};
}
