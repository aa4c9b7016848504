import { eq } from 'drizzle-orm';
import { db } from '../db';
import {
	analyses,
	calibrations,
	instrumentProfiles,
	instrumentProfileVersions
} from '../db/schema';
import { calibrationMode } from './resolve';

/**
 * The instrument profile version and response calibration an analysis took its settings from,
 * in the API's snake_case names; null parts when the measurement gave them itself.
 */
export interface Provenance {
	profile: {
		id: number;
		name: string;
		version: number;
		version_id: number;
		laser_nm: number;
		detector: 'photon-counting' | 'energy';
		filter_cutoff_cm1: number;
	} | null;
	calibration: {
		id: number;
		method: string;
		c: number;
		u_c: number;
		mode_cm1: number | null;
		valid_from: string;
		valid_until: string | null;
		status: 'active' | 'retired';
	} | null;
}

export async function provenanceOf(analysisId: string): Promise<Provenance> {
	const [row] = await db
		.select({
			profile: instrumentProfiles,
			version: instrumentProfileVersions,
			calibration: calibrations
		})
		.from(analyses)
		.leftJoin(
			instrumentProfileVersions,
			eq(instrumentProfileVersions.id, analyses.profileVersionId)
		)
		.leftJoin(instrumentProfiles, eq(instrumentProfiles.id, instrumentProfileVersions.profileId))
		.leftJoin(calibrations, eq(calibrations.id, analyses.calibrationId))
		.where(eq(analyses.id, analysisId));
	const p = row?.profile;
	const v = row?.version;
	const c = row?.calibration;
	return {
		profile:
			p && v
				? {
						id: p.id,
						name: p.name,
						version: v.version,
						version_id: v.id,
						laser_nm: v.laserNm,
						detector: v.detector,
						filter_cutoff_cm1: v.filterCutoffCm1
					}
				: null,
		calibration: c
			? {
					id: c.id,
					method: c.method,
					c: c.c,
					u_c: c.uC,
					mode_cm1: calibrationMode(c.inputs) ?? null,
					valid_from: c.validFrom.toISOString(),
					valid_until: c.validUntil?.toISOString() ?? null,
					status: c.status
				}
			: null
	};
}
