/**
 * The flag catalogue: every way a reading can be doubtful, each with a stable code (the API and
 * the database keep it), a severity and a sentence for a person. An `error` means the number is
 * withheld: the data cannot support a temperature, and the flag says why.
 */
import type { Flag, Severity } from './types';

export const FLAG_CATALOGUE = {
	'weak-anti-stokes': {
		severity: 'warning',
		what: 'The anti-Stokes band is weak; the temperature rests on few counts.'
	},
	'no-anti-stokes-signal': {
		severity: 'error',
		what: 'No anti-Stokes band stands out of the noise, so no temperature can be given.'
	},
	'no-stokes-signal': {
		severity: 'error',
		what: 'No Stokes band stands out of the noise at the mode.'
	},
	saturation: {
		severity: 'warning',
		what: 'Points at the detector ceiling were left out of the fit.'
	},
	'saturated-band': {
		severity: 'error',
		what: 'The band is clipped at the detector ceiling; its area cannot be measured.'
	},
	'near-filter-cutoff': {
		severity: 'warning',
		what: 'The band lies close to the Rayleigh filter edge, where the response changes steeply.'
	},
	'poor-fit': {
		severity: 'warning',
		what: 'The band model does not describe the data within the noise (reduced χ² too large).'
	},
	'fit-not-converged': { severity: 'error', what: 'The fit did not converge.' },
	'few-points': { severity: 'warning', what: 'Few usable points cover the band.' },
	'modes-disagree': {
		severity: 'warning',
		what: 'The modes give temperatures that disagree beyond their uncertainties.'
	},
	'implausible-temperature': {
		severity: 'error',
		what: 'The ratio gives no physical temperature.'
	},
	'unusual-temperature': {
		severity: 'warning',
		what: 'The temperature is outside the range where Raman thermometry is usually applied.'
	},
	'spikes-removed': { severity: 'info', what: 'Cosmic-ray spikes were removed before fitting.' },
	'joint-separate-disagree': {
		severity: 'warning',
		what: 'The joint fit and the separate-band estimate disagree.'
	},
	'axis-offset': {
		severity: 'info',
		what: 'The laser line is off zero on the shift axis; both bands were moved together.'
	},
	'response-dominates': {
		severity: 'info',
		what: 'The response calibration C dominates the uncertainty, not the counts.'
	},
	'nonlinear-uncertainty': {
		severity: 'info',
		what: 'The relative uncertainty of the ratio is large; the linear GUM result may be inaccurate — see the Monte Carlo result.'
	},
	'monte-carlo-differs': {
		severity: 'warning',
		what: 'The Monte Carlo and GUM uncertainties differ noticeably.'
	},
	'shape-fixed': {
		severity: 'info',
		what: 'The anti-Stokes band was too weak to fit its own position and width; the Stokes shape was used.'
	},
	'peak-shift-disagrees': {
		severity: 'warning',
		what: 'Peak-shift thermometry disagrees with the anti-Stokes/Stokes temperature.'
	},
	'power-sweep-nonlinear': {
		severity: 'warning',
		what: 'Temperature is not linear in laser power; the zero-power extrapolation is doubtful.'
	},
	'laser-heating': { severity: 'info', what: 'The probe laser heats the spot measurably.' },
	// Flags from the instrument profile and its calibration (src/lib/instrument-flags.ts).
	'calibration-expired': {
		severity: 'warning',
		what: 'The response calibration had passed its validity when the spectrum was taken.'
	},
	'laser-differs-from-profile': {
		severity: 'warning',
		what: "The laser wavelength differs from the instrument profile's, so its calibration may not apply."
	},
	'detector-differs-from-profile': {
		severity: 'warning',
		what: "The detector mode (and so the exponent) differs from the instrument profile's."
	},
	'below-filter-cutoff': {
		severity: 'warning',
		what: "A band lies below the profile's filter cut-off and was left out."
	}
} as const satisfies Record<string, { severity: Severity; what: string }>;

export type FlagCode = keyof typeof FLAG_CATALOGUE;

/** A flag with its catalogue severity; `detail` adds the numbers that make it specific. */
export function makeFlag(code: FlagCode, detail?: string, modeCm1?: number): Flag {
	const entry = FLAG_CATALOGUE[code];
	const f: Flag = {
		code,
		severity: entry.severity,
		message: detail ? `${entry.what} ${detail}` : entry.what
	};
	if (modeCm1 !== undefined) f.mode_cm1 = modeCm1;
	return f;
}

export function hasError(flags: Flag[]): boolean {
	return flags.some((f) => f.severity === 'error');
}
