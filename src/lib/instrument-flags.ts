import { makeFlag } from './thermometry/flags';
import type { Flag } from './thermometry/types';

/**
 * How a measurement's settings relate to the instrument profile version and the response
 * calibration they were taken from: which calibration applies to a band, and the warnings a
 * reading carries when the calibration had expired or the measurement departs from the profile.
 * Pure, so the rules are tested without a database.
 */

/** A calibration made at one band applies to a band within this distance, cm⁻¹. */
export const MODE_MATCH_CM1 = 15;

/** Laser wavelengths closer than this are taken as the same laser, nm. */
export const LASER_MATCH_NM = 0.05;

export interface CalibrationCandidate {
	id: number;
	method: string;
	/** The band it was made at; absent for a constant C, which applies to any band. */
	modeCm1?: number;
	status: 'active' | 'retired';
	validFrom: Date;
	validUntil: Date | null;
	createdAt: Date;
	/** The laser and detector of the profile version it was made with, when known. */
	madeWith?: { laserNm: number; detector: 'photon-counting' | 'energy' } | null;
}

export interface ProfileFacts {
	laserNm: number;
	detector: 'photon-counting' | 'energy';
	filterCutoffCm1: number;
}

/** Whether a calibration holds for a band, ignoring its dates and status. */
export function appliesToBand(c: Pick<CalibrationCandidate, 'modeCm1'>, modeCm1: number): boolean {
	return c.modeCm1 === undefined || Math.abs(c.modeCm1 - modeCm1) <= MODE_MATCH_CM1;
}

/**
 * Whether a calibration was made with the profile's present laser and detector: an edit that
 * changes either makes the earlier calibrations of the profile stop applying (C depends on both).
 */
export function appliesToSetup(
	c: Pick<CalibrationCandidate, 'madeWith'>,
	now: Pick<ProfileFacts, 'laserNm' | 'detector'>
): boolean {
	if (!c.madeWith) return true;
	return (
		Math.abs(c.madeWith.laserNm - now.laserNm) <= LASER_MATCH_NM &&
		c.madeWith.detector === now.detector
	);
}

/**
 * The calibration a new measurement uses: an active one that holds for the band (and, given the
 * profile's set-up, was made with it) and had begun by the acquisition time, preferring one still valid then, then the most recently begun.
 * Null when there is none.
 */
export function chooseCalibration<C extends CalibrationCandidate>(
	candidates: C[],
	modeCm1: number,
	at: Date,
	setup?: Pick<ProfileFacts, 'laserNm' | 'detector'>
): C | null {
	const usable = candidates.filter(
		(c) =>
			c.status === 'active' &&
			c.validFrom <= at &&
			appliesToBand(c, modeCm1) &&
			(!setup || appliesToSetup(c, setup))
	);
	const current = (c: C) => (c.validUntil === null || c.validUntil >= at ? 1 : 0);
	usable.sort(
		(a, b) =>
			current(b) - current(a) ||
			b.validFrom.getTime() - a.validFrom.getTime() ||
			b.createdAt.getTime() - a.createdAt.getTime() ||
			b.id - a.id
	);
	return usable[0] ?? null;
}

/** Modes split at the profile's filter cut-off: bands at or below it cannot be used. */
export function splitAtCutoff(modes: number[], cutoffCm1: number) {
	return {
		kept: modes.filter((m) => Math.abs(m) > cutoffCm1),
		below: modes.filter((m) => Math.abs(m) <= cutoffCm1)
	};
}

const day = (d: Date) => d.toISOString().slice(0, 10);

export function instrumentFlags(input: {
	settings: {
		laser_nm: number;
		detector: 'photon-counting' | 'energy';
		modes_below_cutoff?: number[];
	};
	profile: ProfileFacts | null;
	calibration: Pick<CalibrationCandidate, 'id' | 'validUntil'> | null;
	/** When the spectrum was taken (else when it was uploaded). */
	at: Date;
}): Flag[] {
	const { settings, profile, calibration, at } = input;
	const flags: Flag[] = [];
	if (calibration?.validUntil && at > calibration.validUntil) {
		flags.push(
			makeFlag(
				'calibration-expired',
				`Calibration #${calibration.id} was valid until ${day(calibration.validUntil)}; the spectrum is from ${day(at)}.`
			)
		);
	}
	if (profile && Math.abs(settings.laser_nm - profile.laserNm) > LASER_MATCH_NM) {
		flags.push(
			makeFlag(
				'laser-differs-from-profile',
				`The measurement says ${settings.laser_nm} nm, the profile ${profile.laserNm} nm.`
			)
		);
	}
	if (profile && settings.detector !== profile.detector) {
		flags.push(
			makeFlag(
				'detector-differs-from-profile',
				`The measurement says ${settings.detector}, the profile ${profile.detector}.`
			)
		);
	}
	for (const m of settings.modes_below_cutoff ?? []) {
		flags.push(
			makeFlag(
				'below-filter-cutoff',
				`The band at ${m} cm⁻¹ is at or below the cut-off of ${profile?.filterCutoffCm1 ?? '?'} cm⁻¹.`,
				m
			)
		);
	}
	return flags;
}
