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
		laser_nm: positive('laser_nm', 'nm').max(20_000).describe('Laser wavelength in vacuum, nm.'),
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
			.default('photon-counting')
			.describe('Photon-counting detectors (CCD, CMOS, PMT) use exponent 3; energy detection 4.'),
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
		c_factor: positive('c_factor', 'dimensionless').describe(
			'Anti-Stokes/Stokes response ratio C of the instrument.'
		),
		u_c_factor: z
			.number({ error: 'u_c_factor must be a number.' })
			.nonnegative('u_c_factor must not be negative.')
			.describe('Standard uncertainty of C.'),
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
	.refine((m) => m.modes || m.material, {
		path: ['modes'],
		message: 'Give the band to use: `modes` (cm⁻¹) or a `material` key.'
	});

export type MeasurementMetadata = z.infer<typeof measurementMetadata>;

/**
 * The modes to fit. A project's own material key is turned into `modes` when the measurement is
 * taken in (src/lib/server/instruments.ts), so by here the key is built in.
 */
export function modesOf(m: MeasurementMetadata): number[] {
	if (m.modes) return m.modes;
	const builtIn = MATERIAL_MODES[m.material as MaterialKey];
	if (!builtIn) throw new Error(`material “${m.material}” has not been resolved to its modes`);
	return [...builtIn.modes];
}

/** Settings a re-analysis may change; the rest of the metadata stays as uploaded. */
export const reanalysisSettings = z.object({
	lineshape: z.enum(['lorentzian', 'gaussian', 'pseudo-voigt']).optional(),
	detector: z.enum(['photon-counting', 'energy']).optional(),
	c_factor: z.number().positive().optional(),
	u_c_factor: z.number().nonnegative().optional(),
	coverage_factor: z.number().min(1).max(5).optional(),
	monte_carlo: z.number().int().min(1000).max(200_000).optional()
});
export type ReanalysisSettings = z.infer<typeof reanalysisSettings>;
