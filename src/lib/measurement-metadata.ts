import { z } from 'zod';
import { MATERIAL_KEYS, MATERIALS, type Material, type MaterialKey } from './materials';

/**
 * What an acquisition PC or a person says about a measurement, in the API's snake_case names.
 * One schema serves the API (multipart `metadata` part), the upload page and the OpenAPI
 * document, and maps onto the engine's options in `analysisSettings`.
 */

// The material keys a measurement may name, with the shifts of their thermometry modes, from the
// material library (each value's source is kept there).
export const MATERIAL_MODES = {} as Record<
	MaterialKey,
	{ label: string; modes: readonly number[] }
>;
for (const key of MATERIAL_KEYS) {
	const m: Material = MATERIALS[key];
	MATERIAL_MODES[key] = { label: m.label, modes: m.modes.map((mode) => mode.shiftCm1.value) };
}
export type { MaterialKey };
const materialKeys = MATERIAL_KEYS;

const positive = (what: string, unit: string) =>
	z
		.number({ error: `${what} must be a number (${unit}).` })
		.positive(`${what} must be above zero.`);

export const measurementMetadata = z
	.object({
		profile: z
			.union([
				z.number().int().positive(),
				z.string().trim().min(1, 'profile must name an instrument profile.').max(100)
			])
			.optional()
			.describe(
				'An instrument profile of the project, by name or id: its newest version gives `laser_nm`, `detector` and the filter cut-off, and its active response calibration for the band gives `c_factor` and `u_c_factor`, unless they are given here.'
			),
		calibration: z
			.number()
			.int()
			.positive()
			.optional()
			.describe(
				'A response calibration of that profile, by id, instead of the newest active one for the band.'
			),
		laser_nm: positive('laser_nm', 'nm')
			.max(20_000)
			.optional()
			.describe('Laser wavelength in vacuum, nm; required unless a `profile` gives it.'),
		modes: z
			.array(positive('Each mode', 'cm⁻¹').max(5000))
			.min(1)
			.max(8)
			.optional()
			.describe('Raman shifts of the bands to use, cm⁻¹ (magnitudes).'),
		material: z
			.string({ error: 'material must be a material key.' })
			.trim()
			.toLowerCase()
			.regex(
				/^[a-z0-9][a-z0-9-]{1,39}$/,
				`material must be a material key: one of ${materialKeys.join(', ')}, or one of the project's own.`
			)
			.optional()
			.describe(
				`A material key whose modes are used when \`modes\` is not given: a built-in one (${materialKeys.join(', ')}) or one the project added.`
			),
		detector: z
			.enum(['photon-counting', 'energy'])
			.optional()
			.describe(
				'Photon-counting detectors (CCD, CMOS, PMT) use exponent 3; energy detection 4. From the `profile` when it names one, else photon-counting.'
			),
		lineshape: z.enum(['lorentzian', 'gaussian', 'pseudo-voigt']).default('lorentzian'),
		exposure_stokes_s: positive('exposure_stokes_s', 's')
			.optional()
			.describe(
				'Exposure of the Stokes window (or of a combined file), s; 1 s when neither is given.'
			),
		exposure_anti_stokes_s: positive('exposure_anti_stokes_s', 's')
			.optional()
			.describe('Exposure of the anti-Stokes window, s; the Stokes one when not given.'),
		x_axis: z.enum(['auto', 'raman-shift', 'wavenumber', 'wavelength']).default('auto'),
		baseline: z
			.enum(['none', 'polynomial', 'als'])
			.default('none')
			.describe(
				'Broad fluorescence background removed before fitting: none (each band still gets its own local linear baseline), a polynomial, or asymmetric least squares.'
			),
		dark_counts: z
			.number()
			.nonnegative()
			.optional()
			.describe('Constant dark level per point, counts.'),
		c_factor: positive('c_factor', 'dimensionless')
			.optional()
			.describe(
				'Anti-Stokes/Stokes response ratio C of the instrument; required unless the `profile` has a calibration for the band.'
			),
		u_c_factor: z
			.number({ error: 'u_c_factor must be a number.' })
			.nonnegative('u_c_factor must not be negative.')
			.optional()
			.describe('Standard uncertainty of C; given together with `c_factor`.'),
		u_mode_cm1: z
			.number()
			.nonnegative()
			.max(50)
			.optional()
			.describe(
				'Standard uncertainty of the Raman-shift axis calibration, cm⁻¹ (e.g. from neon lines); enters the budget as the mode-position row.'
			),
		u_laser_cm1: z
			.number()
			.nonnegative()
			.max(50)
			.optional()
			.describe('Standard uncertainty of the laser wavenumber, cm⁻¹.'),
		coverage_factor: z.number().min(1).max(5).default(2),
		monte_carlo: z.number().int().min(1000).max(200_000).optional(),
		laser_power_mw: z.number().nonnegative().optional(),
		label: z.string().trim().max(200).optional().describe('Sample label.'),
		batch: z.string().trim().max(100).optional(),
		series: z.string().trim().max(100).optional(),
		x: z.number().optional().describe('Position on the sample, x (µm).'),
		y: z.number().optional().describe('Position on the sample, y (µm).'),
		acquired_at: z.iso.datetime({ offset: true }).optional()
	})
	.superRefine((m, ctx) => {
		const need = (path: string, message: string) =>
			ctx.addIssue({ code: 'custom', path: [path], message });
		if (!m.modes && !m.material)
			need('modes', 'Give the band to use: `modes` (cm⁻¹) or a `material` key.');
		if (m.profile === undefined) {
			if (m.laser_nm === undefined)
				need('laser_nm', 'Give laser_nm (nm), or a `profile` that gives it.');
			if (m.c_factor === undefined)
				need('c_factor', 'Give c_factor, or a `profile` with a response calibration for the band.');
			if (m.calibration !== undefined)
				need('calibration', 'A calibration belongs to a `profile`; name the profile too.');
		}
		if ((m.c_factor === undefined) !== (m.u_c_factor === undefined))
			need(
				m.c_factor === undefined ? 'c_factor' : 'u_c_factor',
				'Give c_factor and u_c_factor together.'
			);
		if (m.calibration !== undefined && m.c_factor !== undefined)
			need('calibration', 'Give either a calibration or c_factor and u_c_factor, not both.');
	});

/** What a client sends: a profile may stand for the instrument fields. */
export type MeasurementRequest = z.infer<typeof measurementMetadata>;

/**
 * What is stored and analysed: the request with the profile and calibration resolved into the
 * fields they stand for (src/lib/server/measurements/resolve.ts), so the stored settings alone
 * say what the engine ran with.
 */
export type MeasurementMetadata = MeasurementRequest & {
	laser_nm: number;
	detector: 'photon-counting' | 'energy';
	c_factor: number;
	u_c_factor: number;
	/** The profile version's filter cut-off, cm⁻¹, when a profile was named. */
	filter_cutoff_cm1?: number;
	/** Bands of the material that lay at or below that cut-off and were left out. */
	modes_below_cutoff?: number[];
};

/**
 * The modes to fit. A project's own material key is turned into `modes` when the measurement is
 * taken in (src/lib/server/instruments.ts), so by here the key is built in.
 */
export function modesOf(m: Pick<MeasurementRequest, 'modes' | 'material'>): number[] {
	if (m.modes) return m.modes;
	const builtIn = MATERIAL_MODES[m.material as MaterialKey];
	if (!builtIn) throw new Error(`material “${m.material}” has not been resolved to its modes`);
	return [...builtIn.modes];
}

/** Settings a re-analysis may change; the rest of the metadata stays as uploaded. */
export const reanalysisSettings = z.object({
	lineshape: z.enum(['lorentzian', 'gaussian', 'pseudo-voigt']).optional(),
	detector: z.enum(['photon-counting', 'energy']).optional(),
	// Fewer modes than uploaded: a reviewer drops a band that does not belong in the mean.
	modes: z.array(z.number().positive().max(5000)).min(1).max(8).optional(),
	c_factor: z.number().positive().optional(),
	u_c_factor: z.number().nonnegative().optional(),
	/** A calibration of the measurement's profile whose C ± u replaces the one used before. */
	calibration: z.number().int().positive().optional(),
	coverage_factor: z.number().min(1).max(5).optional(),
	monte_carlo: z.number().int().min(1000).max(200_000).optional()
});
export type ReanalysisSettings = z.infer<typeof reanalysisSettings>;
